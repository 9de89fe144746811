//! `rerate tradeoff --plot FILE`: measured rejection against taps per phase (top) and
//! single-thread speed against taps per phase (bottom); the baseline methods as flat
//! labelled lines. PNG or SVG by extension.

use std::path::Path;

use anyhow::{anyhow, Result};
use plotters::coord::Shift;
use plotters::prelude::*;

use super::tradeoff::Row;

const SIZE: (u32, u32) = (1100, 900);
const INK: RGBColor = RGBColor(30, 34, 40);
const PAPER: RGBColor = RGBColor(250, 249, 245);
const SINC: RGBColor = RGBColor(20, 110, 160);
const BASE: [RGBColor; 4] = [
    RGBColor(200, 70, 60),
    RGBColor(220, 140, 30),
    RGBColor(120, 90, 170),
    RGBColor(60, 150, 90),
];

/// Draw the two panels to `path`.
pub fn draw(path: &Path, rows: &[Row], in_rate: u32, out_rate: u32, force: bool) -> Result<()> {
    let title = format!("tradeoff {in_rate} Hz -> {out_rate} Hz (measured)");
    let canvas = crate::report::plot::begin(path, force)?;
    let drawn = if canvas.svg {
        let root = SVGBackend::new(&canvas.tmp, SIZE).into_drawing_area();
        paint(&root, rows, &title).and_then(|()| root.present().map_err(|e| anyhow!("{e}")))
    } else {
        let root = BitMapBackend::new(&canvas.tmp, SIZE).into_drawing_area();
        paint(&root, rows, &title).and_then(|()| root.present().map_err(|e| anyhow!("{e}")))
    };
    canvas.finish(drawn)
}

fn paint<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, rows: &[Row], title: &str) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    root.fill(&PAPER).map_err(err)?;
    let root = root
        .titled(title, ("sans-serif", 22).into_font().color(&INK))
        .map_err(err)?;
    let (top, bottom) = root.split_vertically(430);
    let designs: Vec<&Row> = rows.iter().filter(|r| r.taps_per_phase.is_some()).collect();
    let baselines: Vec<&Row> = rows.iter().filter(|r| r.taps_per_phase.is_none()).collect();
    let taps = |r: &Row| r.taps_per_phase.unwrap_or(0) as f64;
    let max_taps = designs.iter().map(|r| taps(r)).fold(8.0, f64::max) * 1.1;
    let max_db = rows.iter().map(|r| r.rejection_db).fold(20.0, f64::max) * 1.1;
    panel(
        &top,
        "rejection (dB) vs taps per phase",
        max_taps,
        (0.0, max_db),
        false,
        &designs,
        &baselines,
        |r| r.rejection_db,
        taps,
    )?;
    let speeds: Vec<f64> = rows.iter().map(|r| r.speed_x_realtime).collect();
    let lo = speeds
        .iter()
        .copied()
        .fold(f64::INFINITY, f64::min)
        .max(1e-3)
        / 2.0;
    let hi = speeds.iter().copied().fold(1.0, f64::max) * 2.0;
    panel(
        &bottom,
        "speed (x real time, one thread, log) vs taps per phase",
        max_taps,
        (lo, hi),
        true,
        &designs,
        &baselines,
        |r| r.speed_x_realtime,
        taps,
    )?;
    Ok(())
}

#[allow(clippy::too_many_arguments)]
fn panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    caption: &str,
    max_taps: f64,
    (y0, y1): (f64, f64),
    log: bool,
    designs: &[&Row],
    baselines: &[&Row],
    value: impl Fn(&Row) -> f64,
    taps: impl Fn(&Row) -> f64,
) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let e = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    let font = ("sans-serif", 15).into_font().color(&INK);
    let mut b = ChartBuilder::on(area);
    b.caption(caption, ("sans-serif", 17).into_font().color(&INK))
        .margin(14)
        .x_label_area_size(36)
        .y_label_area_size(70);
    // Log and linear axes are different chart types; draw with whichever applies.
    macro_rules! draw_chart {
        ($chart:expr) => {{
            let mut chart = $chart;
            chart
                .configure_mesh()
                .x_desc("taps per phase")
                .label_style(font.clone())
                .axis_desc_style(font.clone())
                .draw()
                .map_err(e)?;
            let pts: Vec<(f64, f64)> = designs.iter().map(|r| (taps(r), value(r))).collect();
            chart
                .draw_series(LineSeries::new(pts.clone(), SINC.stroke_width(2)))
                .map_err(e)?
                .label("windowed sinc")
                .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], SINC.stroke_width(2)));
            chart
                .draw_series(pts.iter().map(|&p| Circle::new(p, 4, SINC.filled())))
                .map_err(e)?;
            for (i, r) in baselines.iter().enumerate() {
                let c = BASE[i % BASE.len()];
                let v = value(r);
                chart
                    .draw_series(LineSeries::new(
                        vec![(0.0, v), (max_taps, v)],
                        c.stroke_width(1),
                    ))
                    .map_err(e)?
                    .label(r.method.clone())
                    .legend(move |(x, y)| {
                        PathElement::new(vec![(x, y), (x + 18, y)], c.stroke_width(2))
                    });
            }
            chart
                .configure_series_labels()
                .label_font(font.clone())
                .background_style(PAPER.mix(0.9))
                .border_style(INK)
                .position(SeriesLabelPosition::LowerRight)
                .draw()
                .map_err(e)?;
        }};
    }
    if log {
        draw_chart!(b
            .build_cartesian_2d(0.0..max_taps, (y0..y1).log_scale())
            .map_err(e)?);
    } else {
        draw_chart!(b.build_cartesian_2d(0.0..max_taps, y0..y1).map_err(e)?);
    }
    Ok(())
}
