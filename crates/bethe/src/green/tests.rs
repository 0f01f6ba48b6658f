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
    for &(n, l) in &[
        (1u32, 0u32),
        (2, 0),
        (2, 1),
        (3, 2),
        (5, 1),
        (8, 0),
        (12, 5),
    ] {
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
                let kmax =
                    ((300.0 + 20.0 * n as f64) / -z.ln()).ceil() as usize + 4 * n as usize + 50;
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
        eprintln!(
            "({n},{l}) {} err {} nodes {} bits {} t {:.3}",
            r.value_string(),
            r.abs_err,
            r.nodes,
            r.bits,
            r.seconds
        );
        assert!(
            d < 1e-15,
            "({n},{l}): {} vs {v}: diff {d:e}",
            r.value_string()
        );
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
                eprintln!(
                    "L={} nu={} closed={} direct={} loss={}",
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
#[ignore]
fn debug_eval() {
    for &(n, l) in &[(20u32, 0u32)] {
        let sd = super::StateData::new(n, l).unwrap();
        for level in 0..0 {
            let (v, loss, nodes) = super::evaluate(&sd, 80, level, 200);
            eprintln!(
                "({n},{l}) level {level}: {} loss {loss} nodes {nodes}",
                v.to_f64()
            );
        }
        let prob = sd.problem(200);
        for x in [1.9, 1.99, 1.999999, 2.000001, 2.01, 2.1, 2.9, 3.1, 5.5] {
            let nu = Float::with_val(200, x);
            let mut m = Meter::new();
            let s = prob.sample(&nu, &mut m);
            eprintln!(
                "   nu={:.4} I={:.15e} Ilog={:.6e} loss={}",
                nu.to_f64(),
                s.value.to_f64(),
                s.log_coef.to_f64(),
                m.loss_bits
            );
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
            Ok(r) => eprintln!(
                "({n},{l}) D={d} {} err {:.2e} nodes {} bits {} t {:.3}",
                r.value_string(),
                r.abs_err,
                r.nodes,
                r.bits,
                r.seconds
            ),
            Err(e) => eprintln!("({n},{l}) D={d} ERROR {e}"),
        }
    }
}

#[test]
#[ignore]
fn debug_loss() {
    let st: Vec<u32> = std::env::var("KZ_NL")
        .unwrap_or("100,20".into())
        .split(',')
        .map(|x| x.parse().unwrap())
        .collect();
    let (n, l) = (st[0], st[1]);
    let chs = channels(n, l).unwrap();
    for ch in &chs {
        let lo = ChannelFloat::new(ch, 300);
        let hi = ChannelFloat::new(ch, 1200);
        for frac in [
            0.0005, 0.003, 0.01, 0.03, 0.08, 0.15, 0.25, 0.35, 0.5, 0.7, 0.9, 0.99,
        ] {
            let nu = Float::with_val(1200, n as f64 * frac + 0.00123);
            let p_hi = NuPoint::new(n, &nu);
            let p_lo = NuPoint::new(n, &Float::with_val(300, &nu));
            let mut m1 = Meter::new();
            let mut m2 = Meter::new();
            let a = channel_j(&lo, &p_lo, &mut m1).j;
            let b = channel_j(&hi, &p_hi, &mut m2).j;
            let r = rel(&Float::with_val(1200, &a), &b);
            eprintln!(
                "L={} nu={:.4} z={:.4} rel={:.2e} (bits lost {:.0}) meter={}",
                ch.big_l,
                nu.to_f64(),
                p_hi.zp.z.to_f64(),
                r,
                300.0 + r.log2(),
                m1.loss_bits
            );
        }
    }
}

#[test]
#[ignore]
fn debug_parts() {
    use super::stieltjes::meixner_stieltjes;
    let n = 100u32;
    for big_l in [19u32, 21, 50] {
        let beta = 2 * big_l + 2;
        for frac in [0.0005, 0.01, 0.03, 0.25, 0.35, 0.5] {
            let nu = Float::with_val(1200, n as f64 * frac + 0.00123);
            let ph = NuPoint::new(n, &nu);
            let pl = NuPoint::new(n, &Float::with_val(300, &nu));
            let ah = Float::with_val(1200, (big_l + 1) as u32 - Float::with_val(1200, &nu));
            let al = Float::with_val(300, &ah);
            let mut m = Meter::new();
            let h = meixner_stieltjes(beta, &ah, &ph.zp, &mut m).value;
            let mut m = Meter::new();
            let lo = meixner_stieltjes(beta, &al, &pl.zp, &mut m).value;
            let r = rel(&Float::with_val(1200, &lo), &h);
            eprintln!(
                "L={big_l} nu={:.3} z={:.4} m-hat lost {:.0} bits (meter {})",
                nu.to_f64(),
                ph.zp.z.to_f64(),
                300.0 + r.log2(),
                m.loss_bits
            );
        }
    }
}

#[test]
#[ignore]
fn debug_timing() {
    use std::time::Instant;
    let st: Vec<u32> = std::env::var("KZ_NL")
        .unwrap_or("200,0".into())
        .split(',')
        .map(|x| x.parse().unwrap())
        .collect();
    let (n, l) = (st[0], st[1]);
    let sd = super::StateData::new(n, l).unwrap();
    let prec = 250;
    let prob = sd.problem(prec);
    for frac in [0.001, 0.01, 0.05, 0.1, 0.2, 0.4, 0.6, 0.8, 0.95] {
        let nu = Float::with_val(prec, n as f64 * frac + 0.00123);
        let t = Instant::now();
        let mut m = Meter::new();
        for _ in 0..10 {
            let _ = prob.sample(&nu, &mut m);
        }
        let p = NuPoint::new(n, &nu);
        let t1 = t.elapsed().as_secs_f64() / 10.0;
        let t = Instant::now();
        for _ in 0..10 {
            for ch in &prob.channels {
                let mut m = Meter::new();
                let _ = channel_j(ch, &p, &mut m);
            }
        }
        let t2 = t.elapsed().as_secs_f64() / 10.0;
        let t = Instant::now();
        for _ in 0..10 {
            for ch in &prob.channels {
                let a = Float::with_val(prec, (ch.big_l + 1) as u32 - Float::with_val(prec, &nu));
                let mut m = Meter::new();
                let _ = super::stieltjes::meixner_stieltjes(ch.beta, &a, &p.zp, &mut m);
            }
        }
        let t3 = t.elapsed().as_secs_f64() / 10.0;
        eprintln!(
            "nu={:.3} z={:.3} sample {:.2} ms  channels {:.2} ms  stieltjes {:.2} ms",
            nu.to_f64(),
            p.zp.z.to_f64(),
            t1 * 1e3,
            t2 * 1e3,
            t3 * 1e3
        );
    }
}
