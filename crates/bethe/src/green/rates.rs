//! Node counts of the Gauss rules: the assumed and observed convergence
//! rates (bits of accuracy gained per node) and the rounding of node counts.

/// Largest convergence rate assumed for a Gauss rule on a panel, in bits
/// per node, when a pair of rules misses its tolerance and more nodes are
/// planned: the mapped panels of [`super::panels::panel_layout`] expect
/// 3.5 bits per node or more ([`super::panels::Panel::expected_rate`]) and
/// use their own rate when it is lower; the first panel (logarithmic
/// product rule) uses this one.
pub(crate) const BITS_PER_NODE: f64 = 4.0;

/// Fewest nodes on one panel.
pub(crate) const MIN_NODES: usize = 4;
/// Most nodes on one panel.
pub(crate) const MAX_NODES: usize = 600;

/// The first guess of the rate (bits per node) on the first panel
/// (logarithmic product rule); the mapped panels start from their expected
/// rate.
pub(crate) const FIRST_PANEL_RATE: f64 = 3.5;

/// Rounds a node count up to an even number (no node at a panel midpoint)
/// within [MIN_NODES, MAX_NODES].
pub(crate) fn even_nodes(k: f64) -> usize {
    let k = (k.ceil().max(0.0) as usize).clamp(MIN_NODES, MAX_NODES);
    k + k % 2
}

/// The finer rule of a pair whose cruder rule has `nodes` nodes: enough
/// more nodes that its error is far below the cruder one's, so that their
/// difference estimates the cruder rule's error: an eighth more, at least
/// 4 (at the 3.5 bits per node or more of the panels, at least 14 bits).
pub(crate) fn finer_nodes(nodes: usize) -> usize {
    even_nodes((nodes + (nodes / 8).max(4)) as f64)
}

/// Nodes expected to bring an integral of size about 2^mag_exp to an
/// absolute error below `tol`, at `rate` bits per node, with `margin` bits
/// to spare.
pub(crate) fn nodes_for(mag_exp: i32, tol: f64, rate: f64, margin: f64) -> usize {
    let bits = f64::from(mag_exp) - tol.log2() + margin;
    even_nodes(bits / rate)
}
