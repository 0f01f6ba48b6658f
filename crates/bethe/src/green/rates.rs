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

/// Bits below the logarithmic part's contribution to which the first
/// panel's product rule with [`MIN_NODES`] nodes brings the panel, and the
/// bits it gains at least per added node while that part limits it: the
/// rule integrates I_log ln nu exactly only for a polynomial I_log, and
/// I_log falls like a high power of nu for large l, which it follows slowly
/// (about 2 to 4 bits per node, from 9 to 12 bits below that part at 4
/// nodes; states n = 1 to 200, l = 0 to 199, at 20 and 40 digits,
/// benches/README.md, "Tenth round").
pub(crate) const FIRST_PANEL_LOG_OFFSET: f64 = 9.0;
/// See [`FIRST_PANEL_LOG_OFFSET`].
pub(crate) const FIRST_PANEL_LOG_RATE: f64 = 2.0;

/// Bits below the first panel's contribution to which its product rule
/// with [`MIN_NODES`] nodes brings the rest of the integrand (I_an and an
/// I_log far below it), and the bits it gains at least per added node: 50
/// to 85 bits at 4 nodes and 12 to 20 bits per node in the same states
/// where the logarithmic part does not limit the rule (l >= 9).
pub(crate) const FIRST_PANEL_SMOOTH_OFFSET: f64 = 48.0;
/// See [`FIRST_PANEL_SMOOTH_OFFSET`].
pub(crate) const FIRST_PANEL_SMOOTH_RATE: f64 = 8.0;

/// Nodes of the first pair's cruder rule on the first panel (logarithmic
/// product rule) for an error below `tol` with `margin` bits to spare, when
/// the panel contributes about 2^mag_exp and its logarithmic part
/// I_log ln nu about 2^log_mag_exp: the fewer of the count at
/// [`FIRST_PANEL_RATE`] bits per node and the count the two parts of the
/// rule's error ask for ([`FIRST_PANEL_LOG_OFFSET`] and
/// [`FIRST_PANEL_SMOOTH_OFFSET`]). At high l the logarithmic part is
/// hundreds of bits below the rest and a handful of nodes meet the goal,
/// where the rate alone would ask for 16 or more. A start that is short
/// is caught by the pair of rules, which then adds nodes.
pub(crate) fn first_panel_nodes(mag_exp: i32, log_mag_exp: i32, tol: f64, margin: f64) -> usize {
    let by_rate = nodes_for(mag_exp, tol, FIRST_PANEL_RATE, margin);
    let bits = |exp: i32| f64::from(exp) - tol.log2() + margin;
    let log_part = MIN_NODES as f64
        + (bits(log_mag_exp) - FIRST_PANEL_LOG_OFFSET).max(0.0) / FIRST_PANEL_LOG_RATE;
    let smooth_part = MIN_NODES as f64
        + (bits(mag_exp) - FIRST_PANEL_SMOOTH_OFFSET).max(0.0) / FIRST_PANEL_SMOOTH_RATE;
    by_rate.min(even_nodes(log_part.max(smooth_part)))
}

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
