//! `report.svg`: three panels drawn with plotters' SVG backend — the twist angle with each segment's
//! fitted curve and equilibrium, the fit residuals, and the amplitude spectrum around its peak. Text is
//! written as SVG `<text>` elements (plotters without a font feature), so no system font library is
//! needed; the viewer supplies the font.

use super::result_json::WriteError;
use crate::analysis::{Analysis, Sample};
use plotters::prelude::*;
use std::io::Write;
use std::path::Path;

/// Width of the drawing, px: a series is thinned to what this many columns can show.
const WIDTH_PX: u32 = 1100;

fn draw_err<E: std::fmt::Display>(path: &Path) -> impl Fn(E) -> WriteError + '_ {
    move |e| {
        WriteError::new(
            path,
            std::io::Error::other(format!("drawing the report: {e}")),
        )
    }
}

/// `points` (in order of x over `x0..x1`) thinned to what `columns` pixel columns can show: in each
/// column only its lowest and highest point are kept, in their original order. A series of at most
/// two points per column is returned unchanged.
pub fn thin(points: &[(f64, f64)], (x0, x1): (f64, f64), columns: u32) -> Vec<(f64, f64)> {
    let span = x1 - x0;
    if points.len() <= 2 * columns as usize || span.is_nan() || span <= 0.0 {
        return points.to_vec();
    }
    let column = |x: f64| ((x - x0) / span * f64::from(columns)).floor() as i64;
    let mut out = Vec::with_capacity(4 * columns as usize);
    let mut i = 0;
    while i < points.len() {
        let c = column(points[i].0);
        let (mut lo, mut hi) = (i, i);
        let mut j = i + 1;
        while j < points.len() && column(points[j].0) == c {
            if points[j].1 < points[lo].1 {
                lo = j;
            }
            if points[j].1 > points[hi].1 {
                hi = j;
            }
            j += 1;
        }
        out.push(points[lo.min(hi)]);
        if lo != hi {
            out.push(points[lo.max(hi)]);
        }
        i = j;
    }
    out
}

fn range(v: impl Iterator<Item = f64>) -> (f64, f64) {
    let (lo, hi) = v
        .filter(|x| x.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
            (a.min(x), b.max(x))
        });
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.0, 1.0);
    }
    let pad = ((hi - lo) * 0.05).max(1e-12 * hi.abs().max(1.0));
    (lo - pad, hi + pad)
}

/// One panel of the report.
type Area<'a> = DrawingArea<SVGBackend<'a>, plotters::coord::Shift>;

/// Draw the report for `samples` analysed as `a`.
pub fn write_report_svg(path: &Path, samples: &[Sample], a: &Analysis) -> Result<(), WriteError> {
    let e = draw_err(path);
    let mut text = String::new();
    {
        let root = SVGBackend::with_string(&mut text, (WIDTH_PX, 950)).into_drawing_area();
        draw_panels(&root, path, samples, a)?;
        root.present().map_err(&e)?;
    }
    crate::outfile::write_whole(path, |out| out.write_all(text.as_bytes()))
        .map_err(|source| WriteError::new(path, source))
}

fn draw_panels(
    root: &Area,
    path: &Path,
    samples: &[Sample],
    a: &Analysis,
) -> Result<(), WriteError> {
    let e = draw_err(path);
    root.fill(&WHITE).map_err(&e)?;
    let (top, rest) = root.split_vertically(420);
    let (mid, bottom) = rest.split_vertically(250);

    let good: Vec<&Sample> = samples
        .iter()
        .filter(|s| s.t.is_finite() && s.theta.is_finite())
        .collect();
    let (t0, t1) = range(good.iter().map(|s| s.t));
    let residuals = draw_trace(&top, path, &good, a, (t0, t1))?;
    draw_residuals(&mid, path, &residuals, (t0, t1))?;
    draw_spectrum(&bottom, path, a)?;
    Ok(())
}

/// The twist angle with each segment's fitted curve and equilibrium line and the moves, over
/// `t0..t1` s. Returns the fit residuals `(t, urad)`.
fn draw_trace(
    area: &Area,
    path: &Path,
    good: &[&Sample],
    a: &Analysis,
    (t0, t1): (f64, f64),
) -> Result<Vec<(f64, f64)>, WriteError> {
    let e = draw_err(path);
    let points: Vec<(f64, f64)> = good.iter().map(|s| (s.t, s.theta * 1e3)).collect();
    let (y0, y1) = range(points.iter().map(|p| p.1));
    let title = format!(
        "Twist angle, fits and equilibria  (G = {:.4e} ± {:.1e} m^3 kg^-1 s^-2)",
        a.g.value, a.g.u
    );
    let mut chart = ChartBuilder::on(area)
        .caption(title, ("sans-serif", 18))
        .margin(12)
        .x_label_area_size(32)
        .y_label_area_size(70)
        .build_cartesian_2d(t0..t1, y0..y1)
        .map_err(&e)?;
    chart
        .configure_mesh()
        .x_desc("t (s)")
        .y_desc("theta (mrad)")
        .draw()
        .map_err(&e)?;
    chart
        .draw_series(
            thin(&points, (t0, t1), WIDTH_PX)
                .into_iter()
                .map(|p| Circle::new(p, 1, RGBColor(120, 120, 120).filled())),
        )
        .map_err(&e)?;
    let mut residuals: Vec<(f64, f64)> = Vec::new();
    for seg in &a.segments {
        let in_seg: Vec<&&Sample> = good
            .iter()
            .filter(|s| s.t >= seg.start && s.t <= seg.end)
            .collect();
        let curve: Vec<(f64, f64)> = in_seg
            .iter()
            .map(|s| (s.t, seg.fit.eval(s.t) * 1e3))
            .collect();
        chart
            .draw_series(LineSeries::new(
                thin(&curve, (t0, t1), WIDTH_PX),
                RGBColor(200, 40, 40).stroke_width(2),
            ))
            .map_err(&e)?;
        // Equilibrium line (with the fitted drift).
        let line: Vec<(f64, f64)> = [seg.start, seg.end]
            .iter()
            .map(|&t| {
                let eq = seg.equilibrium.value + seg.fit.params[5] * (t - seg.t_ref);
                (t, eq * 1e3)
            })
            .collect();
        chart
            .draw_series(LineSeries::new(line, RGBColor(30, 90, 200).stroke_width(2)))
            .map_err(&e)?;
        residuals.extend(
            in_seg
                .iter()
                .map(|s| (s.t, (s.theta - seg.fit.eval(s.t)) * 1e6)),
        );
    }
    for &m in &a.moves {
        chart
            .draw_series(LineSeries::new(
                vec![(m, y0), (m, y1)],
                RGBColor(0, 150, 0).stroke_width(1),
            ))
            .map_err(&e)?;
    }
    Ok(residuals)
}

/// The fit residuals `(t, urad)` over `t0..t1` s.
fn draw_residuals(
    area: &Area,
    path: &Path,
    residuals: &[(f64, f64)],
    (t0, t1): (f64, f64),
) -> Result<(), WriteError> {
    let e = draw_err(path);
    let (r0, r1) = range(residuals.iter().map(|r| r.1));
    let mut chart = ChartBuilder::on(area)
        .caption("Residuals of the segment fits", ("sans-serif", 16))
        .margin(12)
        .x_label_area_size(32)
        .y_label_area_size(70)
        .build_cartesian_2d(t0..t1, r0..r1)
        .map_err(&e)?;
    chart
        .configure_mesh()
        .x_desc("t (s)")
        .y_desc("residual (urad)")
        .draw()
        .map_err(&e)?;
    chart
        .draw_series(
            thin(residuals, (t0, t1), WIDTH_PX)
                .into_iter()
                .map(|p| Circle::new(p, 1, RGBColor(60, 60, 60).filled())),
        )
        .map_err(&e)?;
    Ok(())
}

/// The amplitude spectrum up to five times its peak frequency, with the peak marked.
fn draw_spectrum(area: &Area, path: &Path, a: &Analysis) -> Result<(), WriteError> {
    let e = draw_err(path);
    let sp = &a.spectrum;
    let fmax = (5.0 * sp.peak_hz).min(*sp.freq_hz.last().unwrap_or(&1.0));
    let pts: Vec<(f64, f64)> = sp
        .freq_hz
        .iter()
        .zip(&sp.magnitude)
        .filter(|(f, _)| **f <= fmax)
        .map(|(f, m)| (f * 1e3, *m))
        .collect();
    let (_, m1) = range(pts.iter().map(|p| p.1));
    let mut chart = ChartBuilder::on(area)
        .caption(
            format!("Amplitude spectrum (peak at {:.2} s)", sp.period()),
            ("sans-serif", 16),
        )
        .margin(12)
        .x_label_area_size(32)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..fmax * 1e3, 0.0..m1)
        .map_err(&e)?;
    chart
        .configure_mesh()
        .x_desc("frequency (mHz)")
        .y_desc("|FFT|")
        .draw()
        .map_err(&e)?;
    chart
        .draw_series(LineSeries::new(
            thin(&pts, (0.0, fmax * 1e3), WIDTH_PX),
            RGBColor(120, 40, 160).stroke_width(2),
        ))
        .map_err(&e)?;
    chart
        .draw_series(LineSeries::new(
            vec![(sp.peak_hz * 1e3, 0.0), (sp.peak_hz * 1e3, m1)],
            RGBColor(0, 150, 0),
        ))
        .map_err(&e)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Lowest and highest y of each column of `points` over `0..1` split in `columns`.
    fn extremes(points: &[(f64, f64)], columns: u32) -> Vec<(i64, f64, f64)> {
        let mut out: Vec<(i64, f64, f64)> = Vec::new();
        for &(x, y) in points {
            let c = (x * f64::from(columns)).floor() as i64;
            match out.last_mut() {
                Some(last) if last.0 == c => {
                    last.1 = last.1.min(y);
                    last.2 = last.2.max(y);
                }
                _ => out.push((c, y, y)),
            }
        }
        out
    }

    #[test]
    fn thinning_keeps_every_column_extremes_in_order() {
        let n = 50_000;
        let points: Vec<(f64, f64)> = (0..n)
            .map(|k| {
                let x = k as f64 / n as f64;
                (x, (x * 400.0).sin() + 0.1 * ((k * 7919) % 13) as f64)
            })
            .collect();
        let thinned = thin(&points, (0.0, 1.0), 100);
        assert!(thinned.len() <= 200, "{}", thinned.len());
        assert!(thinned.windows(2).all(|w| w[0].0 <= w[1].0));
        assert_eq!(extremes(&thinned, 100), extremes(&points, 100));
    }

    #[test]
    fn a_short_series_is_drawn_as_it_is() {
        let points: Vec<(f64, f64)> = (0..150).map(|k| (k as f64, (k % 7) as f64)).collect();
        assert_eq!(thin(&points, (0.0, 150.0), 100), points);
    }
}
