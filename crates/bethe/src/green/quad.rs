//! Gauss–Legendre rules in MPFR, with a companion rule for a logarithmic weight.
//!
//! Nodes are seeded by the double-precision rule of `gauss-quad` and refined
//! by Newton's method on the Legendre recurrence at the working precision.
//!
//! ## The rule cache
//! Rules are kept per (nodes, bits) in one process-wide cache, because a
//! table run asks for the same rules over and over (building them anew for
//! every state costs about as much as a whole small state). A rule depends
//! only on (nodes, bits), never on what was computed before, so the cache
//! changes times, not results. Its size is bounded: past
//! [`CACHE_BUDGET_BYTES`] the least recently used rules are dropped.

use gauss_quad::GaussLegendre;
use rug::Float;
use std::collections::HashMap;
use std::sync::{Arc, Mutex, OnceLock};

/// An N-point Gauss–Legendre rule on [0, 1] at a fixed precision, plus the
/// weights of the product rule for int_0^1 g(x) ln(x) dx.
#[derive(Debug)]
pub(crate) struct Rule {
    /// Nodes in (0, 1), increasing.
    pub(crate) x: Vec<Float>,
    /// Weights (sum to 1).
    pub(crate) w: Vec<Float>,
    /// Product-rule weights: int_0^1 g(x) ln x dx ~ sum_i wlog_i g(x_i),
    /// exact for polynomials g of degree < N.
    pub(crate) wlog: Vec<Float>,
}

impl Rule {
    /// Approximate memory held by the rule (bytes): three MPFR numbers per
    /// node, each a limb array plus its header.
    fn bytes(&self) -> usize {
        let per_float = |x: &Float| (x.prec() as usize).div_ceil(64) * 8 + 32;
        self.x
            .iter()
            .chain(&self.w)
            .chain(&self.wlog)
            .map(per_float)
            .sum()
    }
}

/// Most memory the rule cache keeps (bytes). A rule of N nodes at p bits
/// takes about 3 N (p/8 + 32) bytes: 600 nodes at 1000 bits, the largest
/// rules in use, take about 0.3 MB.
pub(crate) const CACHE_BUDGET_BYTES: usize = 64 << 20;

/// Cached rules with the time of their last use.
#[derive(Default)]
struct RuleCache {
    rules: HashMap<(usize, u32), (Arc<Rule>, u64)>,
    /// Use counter (a logical clock for least-recently-used eviction).
    clock: u64,
    /// Sum of [`Rule::bytes`] over the cached rules.
    bytes: usize,
}

impl RuleCache {
    fn get(&mut self, key: (usize, u32)) -> Option<Arc<Rule>> {
        self.clock += 1;
        let now = self.clock;
        self.rules.get_mut(&key).map(|(r, used)| {
            *used = now;
            r.clone()
        })
    }

    /// Inserts a rule, then drops the least recently used ones while the
    /// cache is over its budget (never the rule just inserted).
    fn insert(&mut self, key: (usize, u32), rule: Arc<Rule>) {
        self.clock += 1;
        let size = rule.bytes();
        if let Some((old, _)) = self.rules.insert(key, (rule, self.clock)) {
            self.bytes -= old.bytes();
        }
        self.bytes += size;
        while self.bytes > CACHE_BUDGET_BYTES && self.rules.len() > 1 {
            let oldest = self
                .rules
                .iter()
                .filter(|(k, _)| **k != key)
                .min_by_key(|(_, (_, used))| *used)
                .map(|(k, _)| *k);
            match oldest.and_then(|k| self.rules.remove(&k)) {
                Some((r, _)) => self.bytes -= r.bytes(),
                None => break,
            }
        }
    }
}

fn cache() -> &'static Mutex<RuleCache> {
    static C: OnceLock<Mutex<RuleCache>> = OnceLock::new();
    C.get_or_init(|| Mutex::new(RuleCache::default()))
}

/// The N-point rule at `prec` bits, from the cache or built (see the module
/// docs: the cache is bounded and never changes a result).
///
/// # Accuracy
/// Nodes and weights are correct to about 2^-(prec-8) (Newton converges
/// quadratically from the double-precision seeds; iteration stops when the
/// correction is below 2^-(prec-4) relative).
pub(crate) fn rule(n: usize, prec: u32) -> Arc<Rule> {
    if let Some(r) = cache().lock().ok().and_then(|mut c| c.get((n, prec))) {
        return r;
    }
    let r = Arc::new(build(n, prec));
    if let Ok(mut c) = cache().lock() {
        c.insert((n, prec), r.clone());
    }
    r
}

/// Legendre P_n(t) and P_{n-1}(t) by the three-term recurrence.
fn legendre_pair(n: usize, t: &Float) -> (Float, Float) {
    let prec = t.prec();
    let mut p0 = Float::with_val(prec, 1);
    let mut p1 = t.clone();
    if n == 0 {
        return (p0, Float::with_val(prec, 0));
    }
    for k in 1..n {
        // (k+1) P_{k+1} = (2k+1) t P_k - k P_{k-1}
        let mut p2 = Float::with_val(prec, t * &p1) * (2 * k + 1) as u32;
        p2 -= Float::with_val(prec, &p0 * k as u32);
        p2 /= (k + 1) as u32;
        p0 = p1;
        p1 = p2;
    }
    (p1, p0)
}

fn build(n: usize, prec: u32) -> Rule {
    let wp = prec + 16;
    let seed = std::num::NonZeroUsize::new(n.max(2)).map(GaussLegendre::new);
    let mut seeds: Vec<f64> = match &seed {
        Some(g) => g.nodes().copied().collect(),
        None => (1..=n)
            .map(|i| (std::f64::consts::PI * (i as f64 - 0.25) / (n as f64 + 0.5)).cos())
            .collect(),
    };
    if n == 1 {
        seeds = vec![0.0];
    }
    seeds.sort_by(|a, b| a.partial_cmp(b).unwrap_or(std::cmp::Ordering::Equal));
    let mut xs = Vec::with_capacity(n);
    let mut ws = Vec::with_capacity(n);
    for s in seeds {
        let mut t = Float::with_val(wp, s);
        let mut dpn = Float::with_val(wp, 0);
        for _ in 0..200 {
            let (pn, pm1) = legendre_pair(n, &t);
            // P_n'(t) = n (t P_n - P_{n-1}) / (t^2 - 1)
            let t2m1 = Float::with_val(wp, &t * &t) - 1u32;
            dpn = (Float::with_val(wp, &t * &pn) - &pm1) * n as u32 / &t2m1;
            let dt = Float::with_val(wp, &pn / &dpn);
            t -= &dt;
            if dt.is_zero() || dt.get_exp().unwrap_or(i32::MIN) < -(prec as i32) - 4 {
                let (pn, pm1) = legendre_pair(n, &t);
                let t2m1 = Float::with_val(wp, &t * &t) - 1u32;
                dpn = (Float::with_val(wp, &t * &pn) - &pm1) * n as u32 / &t2m1;
                break;
            }
        }
        // weight on [-1,1]: 2 / ((1 - t^2) P_n'(t)^2); on [0,1]: half of it
        let one_m_t2 = Float::with_val(wp, 1u32 - Float::with_val(wp, &t * &t));
        let w = Float::with_val(wp, 1u32) / (one_m_t2 * Float::with_val(wp, &dpn * &dpn));
        xs.push(Float::with_val(prec, (t + 1u32) / 2u32));
        ws.push(Float::with_val(prec, w));
    }
    let wlog = log_weights(&xs, &ws, prec);
    Rule { x: xs, w: ws, wlog }
}

/// Weights W_i with sum_i W_i g(x_i) = int_0^1 g(x) ln x dx for polynomials
/// g of degree < N, built from the shifted-Legendre moments
/// int_0^1 P_k(2x-1) ln x dx = -1 (k = 0), (-1)^(k+1) / (k(k+1)) (k >= 1).
fn log_weights(xs: &[Float], ws: &[Float], prec: u32) -> Vec<Float> {
    let n = xs.len();
    let wp = prec + 16;
    let moments: Vec<Float> = (0..n)
        .map(|k| {
            if k == 0 {
                Float::with_val(wp, -1)
            } else {
                let m = Float::with_val(wp, 1u32) / ((k * (k + 1)) as u64);
                if k % 2 == 1 {
                    m
                } else {
                    -m
                }
            }
        })
        .collect();
    xs.iter()
        .zip(ws)
        .map(|(x, w)| {
            let t = Float::with_val(wp, x * 2u32) - 1u32;
            // sum_k (2k+1) P_k(t) m_k
            let mut p0 = Float::with_val(wp, 1);
            let mut p1 = t.clone();
            let mut acc = Float::with_val(wp, &p0 * &moments[0]);
            if n > 1 {
                acc += Float::with_val(wp, &p1 * &moments[1]) * 3u32;
            }
            for k in 1..n.saturating_sub(1) {
                let mut p2 = Float::with_val(wp, &t * &p1) * (2 * k + 1) as u32;
                p2 -= Float::with_val(wp, &p0 * k as u32);
                p2 /= (k + 1) as u32;
                acc += Float::with_val(wp, &p2 * &moments[k + 1]) * (2 * k + 3) as u32;
                p0 = p1;
                p1 = p2;
            }
            Float::with_val(prec, acc * w)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use rug::ops::Pow;

    /// A rule is the same whether it comes from the cache or is built anew
    /// (the cache cannot change a result), and a cache over its budget drops
    /// its least recently used rules but keeps the newest.
    #[test]
    fn cache_is_bounded_and_pure() {
        let cached = rule(24, 192);
        let fresh = build(24, 192);
        assert_eq!(cached.x, fresh.x);
        assert_eq!(cached.w, fresh.w);
        assert_eq!(cached.wlog, fresh.wlog);
        let mut c = RuleCache::default();
        let big = Arc::new(build(40, 2048));
        let per = big.bytes();
        assert!(per > 40 * 3 * 256, "{per}");
        let fit = CACHE_BUDGET_BYTES / per;
        for i in 0..fit + 3 {
            c.insert((i, 2048), big.clone());
            if i + 1 == fit {
                // the cache is full, nothing dropped yet; a use keeps the
                // oldest rule recent
                assert!(c.get((0, 2048)).is_some());
            }
        }
        assert!(c.bytes <= CACHE_BUDGET_BYTES, "{} bytes", c.bytes);
        assert_eq!(c.rules.len(), fit);
        assert!(c.get((fit + 2, 2048)).is_some(), "newest rule kept");
        assert!(c.get((0, 2048)).is_some(), "recently used rule kept");
        assert!(
            c.get((1, 2048)).is_none(),
            "least recently used rule dropped"
        );
    }

    #[test]
    fn integrates_polynomials_and_logs() {
        let r = rule(20, 256);
        // int_0^1 x^7 dx = 1/8
        let s: Float =
            r.x.iter()
                .zip(&r.w)
                .map(|(x, w)| Float::with_val(256, x.clone().pow(7u32)) * w)
                .fold(Float::with_val(256, 0), |a, b| a + b);
        let err = (s - Float::with_val(256, 0.125)).abs();
        assert!(err < 1e-70, "{err}");
        // int_0^1 x^5 ln x dx = -1/36
        let s: Float =
            r.x.iter()
                .zip(&r.wlog)
                .map(|(x, w)| Float::with_val(256, x.clone().pow(5u32)) * w)
                .fold(Float::with_val(256, 0), |a, b| a + b);
        let err = (s + Float::with_val(256, 1) / 36u32).abs();
        assert!(err < 1e-70, "{err}");
        // int_0^1 exp(x) ln x dx = -sum_k 1/(k! (k+1)^2), by term-by-term
        // integration of the exponential series (common practice)
        let mut exact = Float::with_val(256, 0);
        let mut fact = Float::with_val(256, 1);
        for k in 0..80u32 {
            if k > 0 {
                fact *= k;
            }
            exact -= Float::with_val(256, 1) / (Float::with_val(256, &fact) * ((k + 1) * (k + 1)));
        }
        let s: Float =
            r.x.iter()
                .zip(&r.wlog)
                .map(|(x, w)| Float::with_val(256, x.clone().exp()) * w)
                .fold(Float::with_val(256, 0), |a, b| a + b);
        let err = (s - exact).abs();
        assert!(err < 1e-25, "{err}");
    }
}
