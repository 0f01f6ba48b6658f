//! SVG plots (plotters with its SVG backend only: no system libraries).

use crate::app_error::AppError;
use kzero_engine::table::files::write_atomic;
use kzero_engine::Row;
use plotters::prelude::*;
use std::collections::BTreeMap;
use std::path::Path;

fn plot_err<E: std::fmt::Debug>(e: E) -> AppError {
    AppError::Other(format!("cannot draw the plot: {e:?}"))
}

fn range_with_margin(lo: f64, hi: f64) -> (f64, f64) {
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.0, 1.0);
    }
    let span = (hi - lo).abs().max(1e-3 * hi.abs().max(1.0));
    (lo - 0.05 * span, hi + 0.05 * span)
}

/// One curve per l: (n, value) points.
pub type Curves = BTreeMap<u32, Vec<(f64, f64)>>;

const LN_K0_AXIS: &str = "ln k0 (energies in Z^2 Ry)";

/// Plots one curve per l against n in one panel (title and axis label
/// given) and writes the SVG to `path` (atomically).
///
/// # Errors
/// Drawing or I/O failures (exit 1).
pub fn curves_plot(
    title: &str,
    y_desc: &str,
    curves: &Curves,
    path: &Path,
) -> Result<(), AppError> {
    let xs = curves.values().flatten().map(|p| p.0);
    let (xmin, xmax) = xs.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
        (a.min(x), b.max(x))
    });
    let xr = range_with_margin(xmin, xmax);
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (900, 600)).into_drawing_area();
        root.fill(&WHITE).map_err(plot_err)?;
        draw_curves(
            &root,
            title,
            curves,
            xr,
            0,
            SeriesLabelPosition::LowerRight,
            y_desc,
        )?;
        root.present().map_err(plot_err)?;
    }
    Ok(write_atomic(path, svg.as_bytes())?)
}

fn draw_curves<DB: DrawingBackend>(
    area: &DrawingArea<DB, plotters::coord::Shift>,
    title: &str,
    curves: &Curves,
    xr: (f64, f64),
    first_color: usize,
    legend: SeriesLabelPosition,
    y_desc: &str,
) -> Result<(), AppError> {
    let ys = curves.values().flatten().map(|p| p.1);
    let (ymin, ymax) = ys.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), y| {
        (a.min(y), b.max(y))
    });
    let (y0, y1) = range_with_margin(ymin, ymax);
    let mut chart = ChartBuilder::on(area)
        .caption(title, ("sans-serif", 20))
        .margin(15)
        .x_label_area_size(45)
        .y_label_area_size(80)
        .build_cartesian_2d(xr.0..xr.1, y0..y1)
        .map_err(plot_err)?;
    chart
        .configure_mesh()
        .x_desc("n")
        .y_desc(y_desc)
        .draw()
        .map_err(plot_err)?;
    let show_legend = curves.len() <= 12;
    for (i, (l, pts)) in curves.iter().enumerate() {
        let color = Palette99::pick(first_color + i).to_rgba();
        let s = chart
            .draw_series(LineSeries::new(pts.iter().copied(), color.stroke_width(2)))
            .map_err(plot_err)?;
        if show_legend {
            s.label(format!("l = {l}")).legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 20, y)], color.stroke_width(2))
            });
        }
        chart
            .draw_series(pts.iter().map(|&p| Circle::new(p, 3, color.filled())))
            .map_err(plot_err)?;
    }
    if show_legend {
        chart
            .configure_series_labels()
            .position(legend)
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .draw()
            .map_err(plot_err)?;
    }
    Ok(())
}

/// Plots ln k0 against n, one curve per l, and writes the SVG to `path`
/// (atomically). S states (about 2.7 to 3) and l >= 1 (small, negative) are
/// drawn in two panels with their own scales when both are present.
///
/// # Errors
/// Drawing or I/O failures (exit 1).
pub fn table_plot(rows: &[Row], path: &Path) -> Result<(), AppError> {
    let mut s_curve: Curves = BTreeMap::new();
    let mut rest: Curves = BTreeMap::new();
    for r in rows {
        if let Ok(v) = r.ln_k0.parse::<f64>() {
            let target = if r.l == 0 { &mut s_curve } else { &mut rest };
            target.entry(r.l).or_default().push((f64::from(r.n), v));
        }
    }
    let xs = rows.iter().map(|r| f64::from(r.n));
    let (xmin, xmax) = xs.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
        (a.min(x), b.max(x))
    });
    let xr = range_with_margin(xmin, xmax);
    let mut svg = String::new();
    {
        let both = !s_curve.is_empty() && !rest.is_empty();
        let height = if both { 900 } else { 600 };
        let root = SVGBackend::with_string(&mut svg, (900, height)).into_drawing_area();
        root.fill(&WHITE).map_err(plot_err)?;
        if both {
            let (top, bottom) = root.split_vertically(400);
            draw_curves(
                &top,
                "Bethe logarithm ln k0(n, 0)",
                &s_curve,
                xr,
                0,
                SeriesLabelPosition::UpperRight,
                LN_K0_AXIS,
            )?;
            draw_curves(
                &bottom,
                "Bethe logarithm ln k0(n, l), l >= 1",
                &rest,
                xr,
                1,
                SeriesLabelPosition::LowerLeft,
                LN_K0_AXIS,
            )?;
        } else if !s_curve.is_empty() {
            draw_curves(
                &root,
                "Bethe logarithm ln k0(n, 0)",
                &s_curve,
                xr,
                0,
                SeriesLabelPosition::UpperRight,
                LN_K0_AXIS,
            )?;
        } else {
            draw_curves(
                &root,
                "Bethe logarithm ln k0(n, l)",
                &rest,
                xr,
                1,
                SeriesLabelPosition::LowerLeft,
                LN_K0_AXIS,
            )?;
        }
        root.present().map_err(plot_err)?;
    }
    Ok(write_atomic(path, svg.as_bytes())?)
}

/// A named curve with its colour.
type Series<'a> = (&'a str, &'a Vec<(f64, f64)>, RGBColor);

/// One precision setting of a sweep, for the plot.
#[derive(Debug, Clone)]
pub struct SweepPoint {
    /// Requested digits.
    pub digits: u32,
    /// Estimated absolute error.
    pub est_err: f64,
    /// Actual error against the highest setting (none for the highest).
    pub actual_err: Option<f64>,
    /// Wall time (s).
    pub seconds: f64,
}

/// Plots estimated and actual error (log10) and time against digits.
///
/// # Errors
/// Drawing or I/O failures (exit 1).
pub fn sweep_plot(title: &str, pts: &[SweepPoint], path: &Path) -> Result<(), AppError> {
    let lg = |x: f64| if x > 0.0 { x.log10() } else { -400.0 };
    let est: Vec<(f64, f64)> = pts
        .iter()
        .map(|p| (f64::from(p.digits), lg(p.est_err)))
        .collect();
    let act: Vec<(f64, f64)> = pts
        .iter()
        .filter_map(|p| p.actual_err.map(|a| (f64::from(p.digits), lg(a))))
        .filter(|p| p.1 > -399.0)
        .collect();
    let goal: Vec<(f64, f64)> = pts
        .iter()
        .map(|p| (f64::from(p.digits), -f64::from(p.digits)))
        .collect();
    let time: Vec<(f64, f64)> = pts
        .iter()
        .map(|p| (f64::from(p.digits), p.seconds))
        .collect();
    let (dmin, dmax) = pts
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
            (a.min(f64::from(p.digits)), b.max(f64::from(p.digits)))
        });
    let (x0, x1) = range_with_margin(dmin, dmax);
    let all_y = est
        .iter()
        .chain(act.iter())
        .chain(goal.iter())
        .map(|p| p.1)
        .filter(|y| *y > -399.0);
    let (ymin, ymax) = all_y.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), y| {
        (a.min(y), b.max(y))
    });
    let (y0, y1) = range_with_margin(ymin, ymax);
    let tmax = time.iter().map(|p| p.1).fold(0.0f64, f64::max);
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (1100, 500)).into_drawing_area();
        root.fill(&WHITE).map_err(plot_err)?;
        let root = root.titled(title, ("sans-serif", 22)).map_err(plot_err)?;
        let (left, right) = root.split_horizontally(600);
        let mut c = ChartBuilder::on(&left)
            .margin(15)
            .x_label_area_size(45)
            .y_label_area_size(60)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(plot_err)?;
        c.configure_mesh()
            .x_desc("requested digits D")
            .y_desc("log10 |error|")
            .draw()
            .map_err(plot_err)?;
        let series: [Series<'_>; 3] = [
            ("estimated error", &est, BLUE),
            ("actual error (vs highest D)", &act, RED),
            ("goal 10^-D", &goal, BLACK),
        ];
        for (name, data, color) in series {
            c.draw_series(LineSeries::new(data.iter().copied(), color.stroke_width(2)))
                .map_err(plot_err)?
                .label(name)
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 20, y)], color.stroke_width(2))
                });
            c.draw_series(data.iter().map(|&p| Circle::new(p, 3, color.filled())))
                .map_err(plot_err)?;
        }
        c.configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .draw()
            .map_err(plot_err)?;
        let mut t = ChartBuilder::on(&right)
            .margin(15)
            .x_label_area_size(45)
            .y_label_area_size(60)
            .build_cartesian_2d(x0..x1, 0.0..(tmax * 1.1).max(1e-3))
            .map_err(plot_err)?;
        t.configure_mesh()
            .x_desc("requested digits D")
            .y_desc("wall time (s)")
            .draw()
            .map_err(plot_err)?;
        t.draw_series(LineSeries::new(time.iter().copied(), GREEN.stroke_width(2)))
            .map_err(plot_err)?;
        t.draw_series(time.iter().map(|&p| Circle::new(p, 3, GREEN.filled())))
            .map_err(plot_err)?;
        root.present().map_err(plot_err)?;
    }
    Ok(write_atomic(path, svg.as_bytes())?)
}
