//! Green (in progress).
