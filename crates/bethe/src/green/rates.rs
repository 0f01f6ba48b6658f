//! Node counts of the Gauss rules: the assumed and observed convergence
//! rates (bits of accuracy gained per node) and the rounding of node counts.

/// Assumed convergence rate of Gauss–Legendre on a panel, in bits per node:
/// with the nearest singularity one panel width beyond an end (the panel
/// layout of [`super::panels::panel_layout`]) the error falls like
/// (3 + sqrt 8)^(-2N), about 5.1 bits per node; 4 leaves room for the
/// logarithmic first panel and for constants.
pub(crate) const BITS_PER_NODE: f64 = 4.0;

/// Fewest nodes on one panel.
pub(crate) const MIN_NODES: usize = 4;
/// Most nodes on one panel.
pub(crate) const MAX_NODES: usize = 600;

/// Default rate (bits per node) for the first guess on a panel; later
/// panels use the rate seen on the previous one (geometrically alike panels
/// converge alike), within [`BITS_PER_NODE`] and [`MAX_RATE`].
pub(crate) const FIRST_GUESS_RATE: f64 = 5.0;
/// The first guess on the first panel (logarithmic product rule, slower).
pub(crate) const FIRST_PANEL_RATE: f64 = 3.5;
/// Largest rate carried over from one panel to the next.
pub(crate) const MAX_RATE: f64 = 12.0;

/// Rounds a node count up to an even number (no node at a panel midpoint)
/// within [MIN_NODES, MAX_NODES].
pub(crate) fn even_nodes(k: f64) -> usize {
    let k = (k.ceil().max(0.0) as usize).clamp(MIN_NODES, MAX_NODES);
    k + k % 2
}

/// The finer rule of a pair whose cruder rule has `nodes` nodes: enough
/// more nodes that its error is far below the cruder one's, so that their
/// difference estimates the cruder rule's error.
pub(crate) fn finer_nodes(nodes: usize) -> usize {
    even_nodes((nodes + (nodes / 4).max(4)) as f64)
}

/// Nodes expected to bring an integral of size about 2^mag_exp to an
/// absolute error below `tol`, at `rate` bits per node, with `margin` bits
/// to spare.
pub(crate) fn nodes_for(mag_exp: i32, tol: f64, rate: f64, margin: f64) -> usize {
    let bits = f64::from(mag_exp) - tol.log2() + margin;
    even_nodes(bits / rate)
}
