//! Explicit sum over the spectrum (in progress).
