//! Internal consistency of the closed-form channel sum.

use super::channel::{channels, ChannelFloat};
use super::meixner::{channel_j, channel_j_direct, NuPoint};
use super::meter::Meter;
use rug::Float;

fn rel(a: &Float, b: &Float) -> f64 {
    let d = Float::with_val(a.prec(), a - b).abs();
    (d / Float::with_val(a.prec(), b).abs()).to_f64()
}

#[test]
fn closed_form_matches_direct_sum() {
    let prec = 256;
    for &(n, l) in &[(1u32, 0u32), (2, 0), (2, 1), (3, 2), (5, 1), (8, 0), (12, 5)] {
        let chs = channels(n, l).unwrap();
        for ch in &chs {
            let cf = ChannelFloat::new(ch, prec);
            for frac in [0.03, 0.2, 0.45, 0.77, 0.93] {
                let mut nu: Float = Float::with_val(prec, n) * frac;
                // keep away from integers (poles)
                if (nu.to_f64() - nu.to_f64().round()).abs() < 1e-3 {
                    nu += 0.0123;
                }
                let p = NuPoint::new(n, &nu);
                let mut m = Meter::new();
                let closed = channel_j(&cf, &p, &mut m).j;
                let z = p.zp.z.to_f64();
                let kmax = ((300.0 + 20.0 * n as f64) / -z.ln()).ceil() as usize + 4 * n as usize + 50;
                if kmax > 60_000 {
                    continue;
                }
                let direct = channel_j_direct(&cf, &p, kmax);
                let r = rel(&closed, &direct);
                assert!(
                    r < 1e-55,
                    "(n,l)=({n},{l}) L={} nu={} closed={} direct={} rel={r:e} loss={}",
                    ch.big_l,
                    nu.to_f64(),
                    closed.to_f64(),
                    direct.to_f64(),
                    m.loss_bits
                );
            }
        }
    }
}

#[test]
fn published_n1_n2() {
    // Drake & Swainson, Phys. Rev. A 41, 1243 (1990), as tabulated in the
    // CODATA 2018 adjustment (Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)).
    let s = crate::Settings::with_digits(20);
    for (n, l, v) in [
        (1, 0, "2.984128555765498"),
        (2, 0, "2.811769893120563"),
        (2, 1, "-0.030016708630213"),
    ] {
        let r = super::ln_k0(n, l, &s).unwrap();
        let reference = Float::with_val(128, Float::parse(v).unwrap());
        let d = Float::with_val(128, &r.value - &reference).abs().to_f64();
        eprintln!("({n},{l}) {} err {} nodes {} bits {} t {:.3}", r.value_string(), r.abs_err, r.nodes, r.bits, r.seconds);
        assert!(d < 1e-15, "({n},{l}): {} vs {v}: diff {d:e}", r.value_string());
    }
}

#[test]
#[ignore]
fn debug_samples() {
    use super::channel::channels;
    let prec = 200;
    for &(n, l) in &[(2u32, 0u32)] {
        let chs = channels(n, l).unwrap();
        for ch in &chs {
            let cf = ChannelFloat::new(ch, prec);
            for frac in [0.1, 0.5, 0.62, 0.8, 0.9, 0.97, 0.99, 0.999] {
                let nu: Float = Float::with_val(prec, n) * frac;
                let p = NuPoint::new(n, &nu);
                let mut m = Meter::new();
                let closed = channel_j(&cf, &p, &mut m).j;
                let direct = channel_j_direct(&cf, &p, 3000);
                eprintln!("L={} nu={} closed={} direct={} loss={}", ch.big_l, nu.to_f64(), closed.to_f64(), direct.to_f64(), m.loss_bits);
            }
        }
    }
}

#[test]
#[ignore]
fn debug_eval() {
    for &(n, l) in &[(20u32, 0u32)] {
        let sd = super::StateData::new(n, l).unwrap();
        for level in 0..0 {
            let (v, loss, nodes) = super::evaluate(&sd, 80, level, 200);
            eprintln!("({n},{l}) level {level}: {} loss {loss} nodes {nodes}", v.to_f64());
        }
        let prob = sd.problem(200);
        for x in [1.9, 1.99, 1.999999, 2.000001, 2.01, 2.1, 2.9, 3.1, 5.5] {
            let nu = Float::with_val(200, x);
            let mut m = Meter::new();
            let s = prob.sample(&nu, &mut m);
            eprintln!("   nu={:.4} I={:.15e} Ilog={:.6e} loss={}", nu.to_f64(), s.value.to_f64(), s.log_coef.to_f64(), m.loss_bits);
        }
    }
}

#[test]
#[ignore]
fn debug_big() {
    let list: Vec<(i64, i64, u32)> = std::env::var("KZ_STATES")
        .unwrap_or("20,0,20;50,3,20;1,0,100".into())
        .split(';')
        .map(|t| {
            let v: Vec<i64> = t.split(',').map(|x| x.parse().unwrap()).collect();
            (v[0], v[1], v[2] as u32)
        })
        .collect();
    for (n, l, d) in list {
        let r = super::ln_k0(n, l, &crate::Settings::with_digits(d));
        match r {
            Ok(r) => eprintln!("({n},{l}) D={d} {} err {:.2e} nodes {} bits {} t {:.3}", r.value_string(), r.abs_err, r.nodes, r.bits, r.seconds),
            Err(e) => eprintln!("({n},{l}) D={d} ERROR {e}"),
        }
    }
}
