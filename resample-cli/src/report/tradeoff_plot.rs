//! `rerate tradeoff --plot FILE`: three panels against taps per phase, in the shared look
//! ([`super::theme`]): measured rejection (with each design's request marked), the
//! single-thread speed (log scale), and the latency a live stream has (measured). Windowed
//! sinc designs are one line per phase; the baseline methods are flat lines. One legend
//! strip above the panels. PNG or SVG by extension.

use std::path::Path;

use anyhow::{anyhow, Result};
use plotters::coord::Shift;
use plotters::prelude::*;

use super::format::plain;
use super::theme::{self, Swatch, INK, PAPER};
use super::tradeoff::Row;

const SIZE: (u32, u32) = (1100, 1100);
/// Colour of the linear-phase designs and of the minimum-phase designs.
const LINEAR: RGBColor = theme::MEASURED;
const MINIMUM: RGBColor = RGBColor(110, 80, 160);
/// Colours of the baselines (not the designs' colours).
const BASE: [RGBColor; 4] = [
    theme::SERIES[0],
    theme::SERIES[1],
    theme::SERIES[3],
    theme::SERIES[4],
];

/// Draw the panels to `path`.
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

/// What one panel shows.
struct Panel<'a> {
    caption: &'a str,
    y_desc: &'a str,
    range: (f64, f64),
    log: bool,
    value: fn(&Row) -> f64,
    /// Mark each design's request (the rejection panel).
    requests: bool,
}

fn paint<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, rows: &[Row], title: &str) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    root.fill(&PAPER).map_err(err)?;
    let root = root
        .titled(title, theme::font(theme::TITLE_PX))
        .map_err(err)?;
    let designs: Vec<&Row> = rows.iter().filter(|r| r.taps_per_phase.is_some()).collect();
    let baselines: Vec<&Row> = rows.iter().filter(|r| r.taps_per_phase.is_none()).collect();
    let phases: Vec<&str> = ["linear", "minimum"]
        .into_iter()
        .filter(|p| designs.iter().any(|r| r.phase == Some(p)))
        .collect();

    let (legend, panels) = root.split_vertically(2 * theme::LEGEND_ROW_PX + 8);
    let mut items: Vec<(String, Swatch)> = phases
        .iter()
        .map(|&p| {
            let c = if p == "minimum" { MINIMUM } else { LINEAR };
            (format!("windowed sinc, {p} phase"), Swatch::Line(c, 2))
        })
        .collect();
    if !designs.is_empty() {
        items.push(("requested".into(), Swatch::Dot(theme::REQUEST)));
    }
    for (i, r) in baselines.iter().enumerate() {
        items.push((r.method.clone(), Swatch::Line(BASE[i % BASE.len()], 2)));
    }
    theme::legend_strip(&legend, &items)?;

    let max_taps = designs
        .iter()
        .filter_map(|r| r.taps_per_phase)
        .max()
        .unwrap_or(8) as f64
        * 1.1;
    let max_db = rows
        .iter()
        .map(|r| r.rejection_db)
        .chain(designs.iter().filter_map(|r| r.requested_db))
        .filter(|v| v.is_finite())
        .fold(20.0, f64::max)
        * 1.1;
    let speeds: Vec<f64> = rows
        .iter()
        .map(|r| r.speed_x_realtime)
        .filter(|v| v.is_finite() && *v > 0.0)
        .collect();
    let lo = speeds
        .iter()
        .copied()
        .fold(f64::INFINITY, f64::min)
        .max(1e-3)
        / 2.0;
    let hi = speeds.iter().copied().fold(1.0, f64::max) * 2.0;
    let lat_hi = rows
        .iter()
        .map(|r| r.measured_latency_ms().max(r.latency_ms))
        .filter(|v| v.is_finite())
        .fold(0.1, f64::max)
        * 1.15;
    let lat_lo = rows
        .iter()
        .map(|r| r.measured_latency_ms().min(r.latency_ms))
        .filter(|v| v.is_finite())
        .fold(0.0, f64::min)
        * 1.15;
    let parts = panels.split_evenly((3, 1));
    let specs = [
        Panel {
            caption: "measured rejection",
            y_desc: "dB",
            range: (0.0, max_db),
            log: false,
            value: |r| r.rejection_db,
            requests: true,
        },
        Panel {
            caption: "speed, one thread (log scale)",
            y_desc: "x real time",
            range: (lo, hi),
            log: true,
            value: |r| r.speed_x_realtime,
            requests: false,
        },
        Panel {
            caption: "latency of a live stream, measured",
            y_desc: "ms",
            range: (lat_lo, lat_hi),
            log: false,
            value: Row::measured_latency_ms,
            requests: false,
        },
    ];
    for (area, spec) in parts.iter().zip(&specs) {
        panel(area, spec, max_taps, &designs, &baselines, &phases)?;
    }
    Ok(())
}

fn panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    spec: &Panel,
    max_taps: f64,
    designs: &[&Row],
    baselines: &[&Row],
    phases: &[&str],
) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let e = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    let value = spec.value;
    let taps = |r: &Row| r.taps_per_phase.unwrap_or(0) as f64;
    let mut b = ChartBuilder::on(area);
    b.caption(spec.caption, theme::font(theme::CAPTION_PX))
        .margin(12)
        .margin_right(30)
        .x_label_area_size(40)
        .y_label_area_size(80);
    // Log and linear axes are different chart types; draw with whichever applies.
    macro_rules! draw_chart {
        ($chart:expr) => {{
            let mut chart = $chart;
            chart
                .configure_mesh()
                .bold_line_style(theme::GRID)
                .light_line_style(TRANSPARENT)
                .axis_style(INK)
                .x_desc("taps per phase")
                .y_desc(spec.y_desc)
                .label_style(theme::font(theme::LABEL_PX))
                .axis_desc_style(theme::font(theme::LABEL_PX))
                .x_label_formatter(&|v| plain(v.round()))
                .y_label_formatter(&|v| plain(*v))
                .draw()
                .map_err(e)?;
            for (i, r) in baselines.iter().enumerate() {
                let c = BASE[i % BASE.len()];
                let v = value(r);
                chart
                    .draw_series(LineSeries::new(
                        vec![(0.0, v), (max_taps, v)],
                        c.stroke_width(2),
                    ))
                    .map_err(e)?;
            }
            if spec.requests {
                chart
                    .draw_series(designs.iter().filter_map(|r| {
                        r.requested_db
                            .map(|q| Circle::new((taps(r), q), 4, theme::REQUEST.stroke_width(2)))
                    }))
                    .map_err(e)?;
            }
            for &p in phases {
                let c = if p == "minimum" { MINIMUM } else { LINEAR };
                let pts: Vec<(f64, f64)> = designs
                    .iter()
                    .filter(|r| r.phase == Some(p))
                    .map(|r| (taps(r), value(r)))
                    .collect();
                chart
                    .draw_series(LineSeries::new(pts.clone(), c.stroke_width(2)))
                    .map_err(e)?;
                chart
                    .draw_series(pts.iter().map(|&q| Circle::new(q, 4, c.filled())))
                    .map_err(e)?;
            }
        }};
    }
    let (y0, y1) = spec.range;
    if spec.log {
        draw_chart!(b
            .build_cartesian_2d(0.0..max_taps, (y0..y1).log_scale())
            .map_err(e)?);
    } else {
        draw_chart!(b.build_cartesian_2d(0.0..max_taps, y0..y1).map_err(e)?);
    }
    Ok(())
}
