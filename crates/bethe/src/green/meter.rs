//! Measuring cancellation: the bits lost when a result is much smaller than
//! the terms that formed it.

use rug::Float;

/// Running record of the largest term seen and the worst loss so far.
#[derive(Debug, Clone, Default)]
pub(crate) struct Meter {
    max_term_exp: Option<i32>,
    /// Largest loss seen (bits).
    pub(crate) loss_bits: i32,
}

impl Meter {
    /// A fresh meter.
    pub(crate) fn new() -> Self {
        Meter::default()
    }

    /// Records a term (or partial result) that entered a sum.
    pub(crate) fn term(&mut self, x: &Float) {
        if let Some(e) = x.get_exp() {
            self.max_term_exp = Some(self.max_term_exp.map_or(e, |m| m.max(e)));
        }
    }

    /// Records the result of the sum: the loss is exp(largest term) - exp(result).
    pub(crate) fn result(&mut self, x: &Float) {
        if let (Some(m), Some(e)) = (self.max_term_exp, x.get_exp()) {
            self.loss_bits = self.loss_bits.max(m - e);
        }
        self.max_term_exp = None;
    }

    /// Records a loss (bits) known from elsewhere, e.g. the estimated error
    /// amplification of an unstable recurrence.
    pub(crate) fn loss(&mut self, bits: i32) {
        self.loss_bits = self.loss_bits.max(bits);
    }

    /// Merges another meter's worst loss into this one.
    pub(crate) fn merge(&mut self, other: &Meter) {
        self.loss_bits = self.loss_bits.max(other.loss_bits);
    }
}
