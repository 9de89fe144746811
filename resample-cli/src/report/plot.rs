//! `--plot FILE` of `verify` and `grade`: a picture of a measurement, PNG or SVG by
//! extension, in the shared look ([`super::theme`]).
//!
//! The default view ([`View::Margin`]) answers "how far under the request is every
//! unwanted component?": on top, the strongest unwanted component (image or alias) against
//! the input frequency that caused it, the requested level drawn across it and the margin
//! between them shaded (red where the measurement is over the request); below, the
//! measured magnitude response: the passband in detail, and the whole range from 0 Hz to
//! the stopband floor (the stopband read from the same unwanted components, placed at the
//! frequency where the converter's filter let them through). [`View::Spectrogram`] shows
//! the output in time and frequency instead, levels on a colour scale.

use std::path::{Path, PathBuf};

use anyhow::{anyhow, bail, Result};
use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;
use resample_core::measure::{Measurement, Unwanted};

use super::format::{hz_short, plain};
use super::theme::{self, Swatch, INK, PAPER};
use crate::error::about_file;
use crate::io::staged::StagedFile;

/// Which picture to draw.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum View {
    /// Unwanted level per input frequency against the request, and the response.
    #[default]
    Margin,
    /// The output in time and frequency, levels on a colour scale.
    Spectrogram,
}

/// Picture size, pixels.
const SIZE: (u32, u32) = (1320, 980);
/// Levels shown by the spectrogram view, dB below the wanted tone's reference level.
const RANGE_DB: f64 = 200.0;
/// The lowest level any view shows, dB relative to the wanted tone.
const DEEPEST_DB: f64 = -240.0;

/// A picture being drawn: the target checked, the font registered, and a staged file
/// beside the target ([`StagedFile`]) that becomes the target only when the picture is
/// complete, and is removed on error or interruption.
#[derive(Debug)]
pub struct Canvas {
    /// True for SVG, false for PNG.
    pub svg: bool,
    /// Where to draw (the staged file's temporary path).
    pub tmp: PathBuf,
    path: PathBuf,
    staged: StagedFile,
}

/// Start a picture at `path` (.png or .svg); refuse an existing file without `force`.
pub fn begin(path: &Path, force: bool) -> Result<Canvas> {
    let ext = path
        .extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase())
        .unwrap_or_default();
    let svg = match ext.as_str() {
        "png" => false,
        "svg" => true,
        _ => bail!("{}: the plot file must end in .png or .svg", path.display()),
    };
    theme::register_font()?;
    let (staged, file) = StagedFile::create_with_extension(path, force, Some(&ext))
        .map_err(|e| about_file(path, e))?;
    // The backend writes the temporary file by its path.
    drop(file);
    Ok(Canvas {
        svg,
        tmp: staged.temp_path().to_path_buf(),
        path: path.to_path_buf(),
        staged,
    })
}

impl Canvas {
    /// Rename the finished picture into place, or remove it if drawing failed.
    pub fn finish(self, drawn: Result<()>) -> Result<()> {
        match drawn {
            Ok(()) => self.staged.commit().map_err(|e| about_file(&self.path, e)),
            // Dropping the staged file removes the temporary one.
            Err(e) => Err(e.context(format!("{}: cannot draw the plot", self.path.display()))),
        }
    }
}

/// Draw `m` to `path` (`.png` or `.svg`) as `view`; `limit_db` is the requested rejection
/// (drawn at `-limit_db`).
pub fn draw(
    path: &Path,
    m: &Measurement,
    title: &str,
    limit_db: Option<f64>,
    view: View,
    force: bool,
) -> Result<()> {
    let canvas = begin(path, force)?;
    let drawn = if canvas.svg {
        let root = SVGBackend::new(&canvas.tmp, SIZE).into_drawing_area();
        paint(&root, m, title, limit_db, view, (240, 120))
            .and_then(|()| root.present().map_err(|e| anyhow!("{e}")))
    } else {
        let root = BitMapBackend::new(&canvas.tmp, SIZE).into_drawing_area();
        paint(&root, m, title, limit_db, view, (360, 180))
            .and_then(|()| root.present().map_err(|e| anyhow!("{e}")))
    };
    canvas.finish(drawn)
}

fn paint<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    m: &Measurement,
    title: &str,
    limit_db: Option<f64>,
    view: View,
    cells: (usize, usize),
) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    root.fill(&PAPER).map_err(err)?;
    let root = root
        .titled(title, theme::font(theme::TITLE_PX))
        .map_err(err)?;
    match view {
        View::Margin => {
            let (top, bottom) = root.split_vertically(500);
            margin_panel(&top, m, limit_db)?;
            let (legend, charts) = bottom.split_vertically(34);
            theme::legend_strip(
                &legend,
                &[
                    ("measured response".into(), Swatch::Line(theme::MEASURED, 2)),
                    (
                        "stopband: strongest unwanted, sweep".into(),
                        Swatch::Dot(theme::MEASURED),
                    ),
                    ("edge probes".into(), Swatch::Dot(theme::PROBE)),
                    ("band edges".into(), Swatch::Line(theme::MARK, 1)),
                ],
            )?;
            let (left, rest) = charts.split_horizontally(420);
            let (middle, right) = rest.split_horizontally(400);
            passband_panel(&left, m)?;
            edge_panel(&middle, m, limit_db)?;
            full_response_panel(&right, m, limit_db)?;
        }
        View::Spectrogram => {
            let (top, bottom) = root.split_vertically(600);
            let (map, bar) = top.split_horizontally(1190);
            spectrogram(&map, m, limit_db, cells)?;
            theme::colour_bar(&bar, -RANGE_DB, 0.0, 20.0, "dB")?;
            passband_panel(&bottom, m)?;
        }
    }
    Ok(())
}

/// Levels clamped to what the pictures show.
fn shown(db: f64) -> f64 {
    if db.is_nan() {
        DEEPEST_DB
    } else {
        db.clamp(DEEPEST_DB, 20.0)
    }
}

/// The points a picture shows: levels under [`DEEPEST_DB`] (silent frames at the fades,
/// digital silence) are left out rather than drawn as a plunge to the bottom.
fn visible(pts: Vec<Unwanted>) -> Vec<Unwanted> {
    pts.into_iter()
        .filter(|p| p.level_db >= DEEPEST_DB)
        .collect()
}

/// A floor for a dB axis: under every value and the request, on a 20 dB step.
fn floor_of(values: impl Iterator<Item = f64>, limit_db: Option<f64>) -> f64 {
    let lowest = values
        .map(shown)
        .fold(-(limit_db.unwrap_or(0.0)) - 20.0, f64::min);
    ((lowest - 5.0) / 20.0).floor() * 20.0
}

fn margin_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    m: &Measurement,
    limit_db: Option<f64>,
) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    let pts = visible(m.unwanted_by_tone());
    let sweep = strongest_per_column(
        pts.iter()
            .filter(|p| !p.from_probe && p.tone_hz > 0.0)
            .map(|p| (p.tone_hz, shown(p.level_db))),
        COLUMNS,
    );
    let probes: Vec<&Unwanted> = pts.iter().filter(|p| p.from_probe).collect();
    let (x0, x1) = pts
        .iter()
        .filter(|p| p.tone_hz > 0.0)
        .fold((f64::INFINITY, 0.0_f64), |(a, b), p| {
            (a.min(p.tone_hz), b.max(p.tone_hz))
        });
    if !(x0.is_finite() && x1 > x0) {
        bail!("the measurement has no frames to draw");
    }
    let (x0, x1) = (x0 / 1.05, x1 * 1.05);
    let floor = floor_of(pts.iter().map(|p| p.level_db), limit_db);
    let (legend, chart_area) = area.split_vertically(34);
    let mut items = vec![(
        "strongest unwanted component (sweep)".to_string(),
        Swatch::Line(theme::MEASURED, 2),
    )];
    if !probes.is_empty() {
        items.push(("edge probes".into(), Swatch::Dot(theme::PROBE)));
    }
    if limit_db.is_some() {
        items.push(("requested".into(), Swatch::Dashed(theme::REQUEST)));
        items.push(("margin".into(), Swatch::Fill(theme::MARGIN, 0.45)));
        items.push((
            "over the request".into(),
            Swatch::Fill(theme::SHORTFALL, 0.6),
        ));
    }
    theme::legend_strip(&legend, &items)?;
    let margin = limit_db.map(|l| m.rejection_db - l);
    let caption = match (limit_db, margin) {
        (Some(l), Some(g)) => format!(
            "worst {} dB, requested -{} dB: margin {} dB",
            plain(round2(-m.rejection_db)),
            plain(l),
            plain(round2(g))
        ),
        _ => format!(
            "worst {} dB (no level requested)",
            plain(round2(-m.rejection_db))
        ),
    };
    let mut chart = ChartBuilder::on(&chart_area)
        .margin(14)
        .margin_right(30)
        .x_label_area_size(44)
        .y_label_area_size(70)
        .caption(
            format!("strongest unwanted component by input frequency; {caption}"),
            theme::font(theme::CAPTION_PX),
        )
        .build_cartesian_2d((x0..x1).log_scale(), floor..10.0)
        .map_err(err)?;
    chart
        .configure_mesh()
        .bold_line_style(theme::GRID)
        .light_line_style(TRANSPARENT)
        .axis_style(INK)
        .label_style(theme::font(theme::LABEL_PX))
        .axis_desc_style(theme::font(theme::LABEL_PX))
        .x_desc("input frequency (Hz)")
        .x_labels(16)
        .y_desc("dB relative to the wanted tone")
        .x_label_formatter(&|v| hz_short(*v))
        .y_label_formatter(&|v| plain(*v))
        .draw()
        .map_err(err)?;
    if let Some(l) = limit_db {
        let line = -l;
        chart.draw_series(shade(&sweep, line)).map_err(err)?;
        chart
            .draw_series(DashedLineSeries::new(
                [(x0, line), (x1, line)],
                8,
                6,
                theme::REQUEST.stroke_width(2),
            ))
            .map_err(err)?;
    }
    chart
        .draw_series(LineSeries::new(
            sweep.iter().copied(),
            theme::MEASURED.stroke_width(2),
        ))
        .map_err(err)?;
    // Each probe's margin (or shortfall) as a stem from the requested level.
    if let Some(l) = limit_db {
        chart
            .draw_series(probes.iter().map(|p| {
                let v = shown(p.level_db);
                let c = if v > -l {
                    theme::SHORTFALL
                } else {
                    theme::MARGIN
                };
                PathElement::new(vec![(p.tone_hz, -l), (p.tone_hz, v)], c.stroke_width(2))
            }))
            .map_err(err)?;
    }
    chart
        .draw_series(
            probes
                .iter()
                .map(|p| Circle::new((p.tone_hz, shown(p.level_db)), 3, theme::PROBE.filled())),
        )
        .map_err(err)?;
    // The worst point, ringed.
    if let Some(w) = pts.iter().max_by(|a, b| a.level_db.total_cmp(&b.level_db)) {
        chart
            .draw_series(std::iter::once(Circle::new(
                (w.tone_hz, shown(w.level_db)),
                8,
                INK.stroke_width(2),
            )))
            .map_err(err)?;
    }
    Ok(())
}

/// Columns the unwanted-level curve is drawn with (about one per two pixels).
const COLUMNS: usize = 600;

/// The strongest level in each of `columns` log-spaced columns of frequency (points sorted
/// by frequency, all above 0 Hz): the worst case the picture is about, drawn without the
/// frame-to-frame jitter finer than a column.
fn strongest_per_column(pts: impl Iterator<Item = (f64, f64)>, columns: usize) -> Vec<(f64, f64)> {
    let pts: Vec<(f64, f64)> = pts.collect();
    let (Some(first), Some(last)) = (pts.first(), pts.last()) else {
        return Vec::new();
    };
    let (lo, hi) = (first.0.ln(), last.0.ln());
    let width = ((hi - lo) / columns as f64).max(f64::MIN_POSITIVE);
    let mut out: Vec<(f64, f64)> = Vec::new();
    let mut current: Option<(usize, f64, f64)> = None; // (column, Hz of the peak, level)
    for &(f, v) in &pts {
        let c = ((f.ln() - lo) / width) as usize;
        match current {
            Some((cc, _, best)) if cc == c => {
                if v > best {
                    current = Some((c, f, v));
                }
            }
            _ => {
                if let Some((_, pf, pv)) = current {
                    out.push((pf, pv));
                }
                current = Some((c, f, v));
            }
        }
    }
    if let Some((_, pf, pv)) = current {
        out.push((pf, pv));
    }
    out
}

/// `v` rounded to two decimals (for captions).
fn round2(v: f64) -> f64 {
    (v * 100.0).round() / 100.0
}

/// The areas between the curve `pts` and the level `line`: the margin where the curve is
/// under it, the shortfall where it is over, one polygon per stretch on one side (split
/// where the curve crosses the line), so that no seams show between pieces.
fn shade(pts: &[(f64, f64)], line: f64) -> Vec<Polygon<(f64, f64)>> {
    let ok = theme::MARGIN.mix(0.45).filled();
    let over = theme::SHORTFALL.mix(0.6).filled();
    let mut out = Vec::new();
    let close = |run: &mut Vec<(f64, f64)>, under: bool, out: &mut Vec<Polygon<(f64, f64)>>| {
        if let (Some(&(x0, _)), Some(&(x1, _))) = (run.first(), run.last()) {
            let mut poly = Vec::with_capacity(run.len() + 2);
            poly.push((x0, line));
            poly.append(run);
            poly.push((x1, line));
            out.push(Polygon::new(poly, if under { ok } else { over }));
        }
    };
    let mut run: Vec<(f64, f64)> = Vec::new();
    let mut under = true;
    for (i, &(x, y)) in pts.iter().enumerate() {
        let here = y <= line;
        if i > 0 && here != under {
            // The crossing, on the straight line between the two points.
            let (xa, ya) = pts[i - 1];
            let t = (line - ya) / (y - ya);
            let xc = xa + t * (x - xa);
            run.push((xc, line));
            close(&mut run, under, &mut out);
            run.push((xc, line));
        }
        under = here;
        run.push((x, y));
    }
    close(&mut run, under, &mut out);
    out
}

/// The passband in detail: the measured response from the bottom of the sweep to the
/// lower Nyquist frequency, on a scale set by the passband's own deviation.
fn passband_panel<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>, m: &Measurement) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    let (lo, _) = m.transfer.band();
    let edge = m.passband_edge_hz;
    let right = edge * 1.04;
    // Lowest and highest level in each of many columns, on the measurement's own grid
    // (smoothed over a hertz), so that the ripple is drawn as it was measured.
    let columns = 900;
    let width = (right - lo) / columns as f64;
    let env: Vec<(f64, f64, f64)> = (0..columns)
        .filter_map(|i| {
            let a = lo + width * i as f64;
            let (mut mn, mut mx) = (f64::INFINITY, f64::NEG_INFINITY);
            for (_, v) in m.transfer.smoothed_db(a, a + width) {
                let v = v - m.reference_gain_db;
                mn = mn.min(v);
                mx = mx.max(v);
            }
            (mn <= mx).then_some((a + 0.5 * width, mn, mx))
        })
        .collect();
    // The scale follows the deviation over the band the ripple is measured on.
    let dev = m
        .transfer
        .smoothed_db(lo, edge)
        .map(|(_, v)| (v - m.reference_gain_db).abs())
        .fold(0.0_f64, f64::max)
        .max(1e-9);
    // A scale of 1, 2 or 5 times a power of ten, a little over the deviation.
    let decade = 10f64.powf((dev * 1.25).log10().floor());
    let span = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|k| k * decade)
        .find(|&s| s >= dev * 1.25)
        .unwrap_or(10.0 * decade);
    let mut chart = ChartBuilder::on(area)
        .margin(14)
        .x_label_area_size(44)
        .y_label_area_size(80)
        .caption(
            format!(
                "passband: ripple {} dB up to {} Hz",
                plain(m.passband_ripple_db),
                plain(edge.round())
            ),
            theme::font(theme::CAPTION_PX),
        )
        .build_cartesian_2d(0.0..right, -span..span)
        .map_err(err)?;
    chart
        .configure_mesh()
        .bold_line_style(theme::GRID)
        .light_line_style(TRANSPARENT)
        .axis_style(INK)
        .label_style(theme::font(theme::LABEL_PX))
        .axis_desc_style(theme::font(theme::LABEL_PX))
        .x_desc("frequency (Hz)")
        .y_desc(format!(
            "dB relative to {} Hz",
            plain(m.reference_hz.round())
        ))
        .x_labels(6)
        .x_label_formatter(&|v| hz_short(*v))
        .y_label_formatter(&|v| plain(*v))
        .draw()
        .map_err(err)?;
    chart
        .draw_series(LineSeries::new(
            [(edge, -span), (edge, span)],
            theme::MARK.stroke_width(1),
        ))
        .map_err(err)?;
    // The envelope, cut where it leaves the panel (the roll-off above the passband edge).
    let mut runs: Vec<Vec<(f64, f64, f64)>> = vec![Vec::new()];
    for &(f, mn, mx) in &env {
        if mn >= -span && mx <= span {
            if let Some(r) = runs.last_mut() {
                r.push((f, mn, mx));
            }
        } else if runs.last().is_some_and(|r| !r.is_empty()) {
            runs.push(Vec::new());
        }
    }
    for r in runs.iter().filter(|r| r.len() > 1) {
        let mut outline: Vec<(f64, f64)> = r.iter().map(|c| (c.0, c.2)).collect();
        outline.extend(r.iter().rev().map(|c| (c.0, c.1)));
        chart
            .draw_series(std::iter::once(Polygon::new(
                outline,
                theme::MEASURED.mix(0.35).filled(),
            )))
            .map_err(err)?;
        for line in [
            r.iter().map(|c| (c.0, c.2)).collect::<Vec<_>>(),
            r.iter().map(|c| (c.0, c.1)).collect(),
        ] {
            chart
                .draw_series(LineSeries::new(line, theme::MEASURED.stroke_width(1)))
                .map_err(err)?;
        }
    }
    Ok(())
}

/// Half the width of the band-edge panel, Hz.
const EDGE_SPAN_HZ: f64 = 250.0;

/// The band edge in detail: the response on the measurement's grid up to the lower Nyquist
/// frequency, and the unwanted components placed at the filter frequencies that let them
/// through above it (the edge probes, and the sweep's frames that fall there).
fn edge_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    m: &Measurement,
    limit_db: Option<f64>,
) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    let fe = f64::from(m.in_rate.min(m.out_rate)) / 2.0;
    let (x0, x1) = (fe - EDGE_SPAN_HZ, fe + EDGE_SPAN_HZ);
    let below: Vec<(f64, f64)> = m
        .transfer
        .smoothed_db(x0, x1)
        .map(|(f, v)| (f, shown(v - m.reference_gain_db)))
        .collect();
    let pts: Vec<Unwanted> = visible(m.unwanted_by_tone())
        .into_iter()
        .filter(|p| p.filter_hz >= x0 && p.filter_hz <= x1)
        .collect();
    let floor = floor_of(
        pts.iter()
            .map(|p| p.level_db)
            .chain(below.iter().map(|p| p.1)),
        limit_db,
    );
    let mut chart = ChartBuilder::on(area)
        .margin(14)
        .x_label_area_size(44)
        .y_label_area_size(56)
        .caption(
            format!("band edge, {} Hz", plain(fe)),
            theme::font(theme::CAPTION_PX),
        )
        .build_cartesian_2d(x0..x1, floor..10.0)
        .map_err(err)?;
    chart
        .configure_mesh()
        .bold_line_style(theme::GRID)
        .light_line_style(TRANSPARENT)
        .axis_style(INK)
        .label_style(theme::font(theme::LABEL_PX))
        .axis_desc_style(theme::font(theme::LABEL_PX))
        .x_desc("Hz from the edge")
        .y_desc("dB")
        .x_labels(6)
        .x_label_formatter(&|v| plain((*v - fe).round()))
        .y_label_formatter(&|v| plain(*v))
        .draw()
        .map_err(err)?;
    chart
        .draw_series(LineSeries::new(
            [(fe, floor), (fe, 10.0)],
            theme::MARK.stroke_width(1),
        ))
        .map_err(err)?;
    chart
        .draw_series(LineSeries::new(below, theme::MEASURED.stroke_width(2)))
        .map_err(err)?;
    stopband_marks(&mut chart, (fe, x1), limit_db, &pts, 3)
}

/// Over a response panel's stopband from `from` to `to`: the request as a dashed line, the
/// sweep's unwanted components as dots and the probes' as larger dots of their own colour.
fn stopband_marks<DB: DrawingBackend>(
    chart: &mut ChartContext<'_, DB, Cartesian2d<RangedCoordf64, RangedCoordf64>>,
    (from, to): (f64, f64),
    limit_db: Option<f64>,
    pts: &[Unwanted],
    probe_size: i32,
) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    if let Some(l) = limit_db {
        chart
            .draw_series(DashedLineSeries::new(
                [(from, -l), (to, -l)],
                8,
                6,
                theme::REQUEST.stroke_width(2),
            ))
            .map_err(err)?;
    }
    chart
        .draw_series(pts.iter().filter(|p| !p.from_probe).map(|p| {
            Circle::new(
                (p.filter_hz, shown(p.level_db)),
                1,
                theme::MEASURED.filled(),
            )
        }))
        .map_err(err)?;
    chart
        .draw_series(pts.iter().filter(|p| p.from_probe).map(|p| {
            Circle::new(
                (p.filter_hz, shown(p.level_db)),
                probe_size,
                theme::PROBE.filled(),
            )
        }))
        .map_err(err)?;
    Ok(())
}

/// The whole response, 0 Hz to the highest stopband frequency measured, down to the floor:
/// the measured response below the lower Nyquist frequency, the strongest unwanted
/// components at the frequencies where the filter let them through above it.
fn full_response_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    m: &Measurement,
    limit_db: Option<f64>,
) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    let curve = m.response_curve(600);
    let pts = visible(m.unwanted_by_tone());
    let lower_nyq = f64::from(m.in_rate.min(m.out_rate)) / 2.0;
    let x1 = pts
        .iter()
        .map(|p| p.filter_hz)
        .fold(2.0 * lower_nyq, f64::max)
        * 1.02;
    let floor = floor_of(
        pts.iter()
            .map(|p| p.level_db)
            .chain(curve.iter().map(|p| p.1)),
        limit_db,
    );
    let mut chart = ChartBuilder::on(area)
        .margin(14)
        .margin_right(30)
        .x_label_area_size(44)
        .y_label_area_size(70)
        .caption(
            "response, 0 Hz to the stopband floor",
            theme::font(theme::CAPTION_PX),
        )
        .build_cartesian_2d(0.0..x1, floor..10.0)
        .map_err(err)?;
    chart
        .configure_mesh()
        .bold_line_style(theme::GRID)
        .light_line_style(TRANSPARENT)
        .axis_style(INK)
        .label_style(theme::font(theme::LABEL_PX))
        .axis_desc_style(theme::font(theme::LABEL_PX))
        .x_desc("frequency at the converter's filter (Hz)")
        .y_desc("dB")
        .x_labels(8)
        .x_label_formatter(&|v| hz_short(*v))
        .y_label_formatter(&|v| plain(*v))
        .draw()
        .map_err(err)?;
    for x in [m.passband_edge_hz, lower_nyq] {
        chart
            .draw_series(LineSeries::new(
                [(x, floor), (x, 10.0)],
                theme::MARK.stroke_width(1),
            ))
            .map_err(err)?;
    }
    stopband_marks(&mut chart, (lower_nyq, x1), limit_db, &pts, 2)?;
    chart
        .draw_series(LineSeries::new(
            curve.iter().map(|&(f, v)| (f, shown(v).max(floor))),
            theme::MEASURED.stroke_width(2),
        ))
        .map_err(err)?;
    Ok(())
}

fn spectrogram<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    m: &Measurement,
    limit_db: Option<f64>,
    (cols, rows): (usize, usize),
) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    let s = m
        .spectrogram
        .as_ref()
        .ok_or_else(|| anyhow!("the measurement kept no spectrogram"))?;
    let frames = s.levels_dbfs.len().max(1);
    let bins = s.levels_dbfs.first().map_or(1, Vec::len).max(1);
    let t_max = frames as f64 * s.hop_s;
    let f_max = (bins - 1) as f64 * s.bin_hz;
    let mut chart = ChartBuilder::on(area)
        .margin(14)
        .x_label_area_size(44)
        .y_label_area_size(70)
        .caption(
            format!(
                "output over time, dB relative to the wanted tone{}",
                limit_db.map_or(String::new(), |l| format!("; requested -{}", plain(l)))
            ),
            theme::font(theme::CAPTION_PX),
        )
        .build_cartesian_2d(0.0..t_max, 0.0..f_max)
        .map_err(err)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .axis_style(INK)
        .label_style(theme::font(theme::LABEL_PX))
        .axis_desc_style(theme::font(theme::LABEL_PX))
        .x_desc("time (s)")
        .y_desc("output frequency (Hz)")
        .x_label_formatter(&|v| plain(*v))
        .y_label_formatter(&|v| hz_short(*v))
        .draw()
        .map_err(err)?;
    // Each cell shows the strongest level of the frames and bins it covers.
    let mut cells = Vec::with_capacity(cols * rows);
    for c in 0..cols {
        let f0 = c * frames / cols;
        let f1 = ((c + 1) * frames / cols).max(f0 + 1).min(frames);
        for r in 0..rows {
            let b0 = r * bins / rows;
            let b1 = ((r + 1) * bins / rows).max(b0 + 1).min(bins);
            let mut peak = f32::NEG_INFINITY;
            for frame in s.levels_dbfs.get(f0..f1).unwrap_or(&[]) {
                for &v in frame.get(b0..b1).unwrap_or(&[]) {
                    peak = peak.max(v);
                }
            }
            let rel = f64::from(peak) - m.reference_dbfs;
            let u = (rel + RANGE_DB) / RANGE_DB;
            cells.push(Rectangle::new(
                [
                    (f0 as f64 * s.hop_s, b0 as f64 * s.bin_hz),
                    (f1 as f64 * s.hop_s, b1 as f64 * s.bin_hz),
                ],
                theme::level_colour(u).filled(),
            ));
        }
    }
    chart.draw_series(cells).map_err(err)?;
    chart
        .draw_series(std::iter::once(Rectangle::new(
            [(0.0, 0.0), (t_max, f_max)],
            INK.stroke_width(1),
        )))
        .map_err(err)?;
    Ok(())
}
