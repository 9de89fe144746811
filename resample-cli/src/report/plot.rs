//! `--plot FILE`: a picture of a measurement. Top: the output in time and frequency, levels
//! in dB relative to the wanted tone, so images and aliases show as lines away from the
//! sweep. Bottom: the measured response in dB over frequency. PNG or SVG by extension.

use std::path::{Path, PathBuf};

use anyhow::{anyhow, bail, Result};
use plotters::coord::Shift;
use plotters::prelude::*;
use resample_core::measure::Measurement;

use crate::error::about_file;
use crate::io::staged::StagedFile;

/// Picture size, pixels.
const SIZE: (u32, u32) = (1200, 900);
/// Levels shown, dB below the wanted tone's reference level.
const RANGE_DB: f64 = 200.0;

const FONT: &[u8] = include_bytes!("../../assets/DejaVuSansMono.ttf");
const INK: RGBColor = RGBColor(222, 226, 214);
const PAPER: RGBColor = RGBColor(18, 22, 30);
const GRID: RGBColor = RGBColor(58, 64, 76);
const TRACE: RGBColor = RGBColor(255, 184, 77);
const LIMIT: RGBColor = RGBColor(230, 90, 90);

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
    plotters::style::register_font("sans-serif", FontStyle::Normal, FONT)
        .map_err(|_| anyhow!("the embedded font cannot be read"))?;
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

/// Colour for a level `0..=1` (0 = floor, 1 = reference): night blue through teal and
/// amber to white.
fn colour(u: f64) -> RGBColor {
    const STOPS: [(f64, (f64, f64, f64)); 5] = [
        (0.0, (18.0, 22.0, 30.0)),
        (0.35, (20.0, 70.0, 96.0)),
        (0.6, (40.0, 150.0, 140.0)),
        (0.85, (245.0, 170.0, 60.0)),
        (1.0, (255.0, 250.0, 235.0)),
    ];
    let u = u.clamp(0.0, 1.0);
    for w in STOPS.windows(2) {
        let ((a, ca), (b, cb)) = (w[0], w[1]);
        if u <= b {
            let t = (u - a) / (b - a);
            let mix = |x: f64, y: f64| (x + (y - x) * t).round() as u8;
            return RGBColor(mix(ca.0, cb.0), mix(ca.1, cb.1), mix(ca.2, cb.2));
        }
    }
    RGBColor(255, 250, 235)
}

/// Draw `m` to `path` (`.png` or `.svg`); `limit_db` draws the requested rejection.
pub fn draw(
    path: &Path,
    m: &Measurement,
    title: &str,
    limit_db: Option<f64>,
    force: bool,
) -> Result<()> {
    let canvas = begin(path, force)?;
    let drawn = if canvas.svg {
        let root = SVGBackend::new(&canvas.tmp, SIZE).into_drawing_area();
        paint(&root, m, title, limit_db, 240, 120)
            .and_then(|()| root.present().map_err(|e| anyhow!("{e}")))
    } else {
        let root = BitMapBackend::new(&canvas.tmp, SIZE).into_drawing_area();
        paint(&root, m, title, limit_db, 360, 180)
            .and_then(|()| root.present().map_err(|e| anyhow!("{e}")))
    };
    canvas.finish(drawn)
}

fn paint<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    m: &Measurement,
    title: &str,
    limit_db: Option<f64>,
    cols: usize,
    rows: usize,
) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    root.fill(&PAPER).map_err(err)?;
    let root = root
        .titled(title, ("sans-serif", 22).into_font().color(&INK))
        .map_err(err)?;
    let (top, bottom) = root.split_vertically(560);
    spectrogram(&top, m, limit_db, cols, rows)?;
    response(&bottom, m)?;
    Ok(())
}

fn spectrogram<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    m: &Measurement,
    limit_db: Option<f64>,
    cols: usize,
    rows: usize,
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
        .margin(16)
        .x_label_area_size(44)
        .y_label_area_size(84)
        .caption(
            format!(
                "output, dB relative to the wanted tone (floor -{RANGE_DB:.0} dB){}",
                limit_db.map_or(String::new(), |l| format!("; requested -{l:.0} dB"))
            ),
            ("sans-serif", 16).into_font().color(&INK),
        )
        .build_cartesian_2d(0.0..t_max, 0.0..f_max)
        .map_err(err)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .axis_style(GRID)
        .label_style(("sans-serif", 14).into_font().color(&INK))
        .x_desc("time (s)")
        .y_desc("frequency (Hz)")
        .y_label_formatter(&|v| format!("{v:.0}"))
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
            for frame in &s.levels_dbfs[f0..f1] {
                for &v in &frame[b0..b1] {
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
                colour(u).filled(),
            ));
        }
    }
    chart.draw_series(cells).map_err(err)?;
    Ok(())
}

fn response<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>, m: &Measurement) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    let curve = m.response_curve(600);
    let (lo, hi) = m.transfer.band();
    let floor = curve
        .iter()
        .map(|p| p.1)
        .fold(0.0_f64, f64::min)
        .clamp(-RANGE_DB, -1.0)
        - 1.0;
    let mut chart = ChartBuilder::on(area)
        .margin(16)
        .x_label_area_size(44)
        .y_label_area_size(84)
        .caption(
            format!(
                "measured response, dB relative to {:.0} Hz; ripple {:.2e} dB up to {:.0} Hz",
                m.reference_hz, m.passband_ripple_db, m.passband_edge_hz
            ),
            ("sans-serif", 16).into_font().color(&INK),
        )
        .build_cartesian_2d((lo..hi).log_scale(), floor..2.0)
        .map_err(err)?;
    chart
        .configure_mesh()
        .bold_line_style(GRID)
        .light_line_style(PAPER)
        .axis_style(GRID)
        .label_style(("sans-serif", 14).into_font().color(&INK))
        .x_desc("frequency (Hz)")
        .y_desc("level (dB)")
        .x_label_formatter(&|v| format!("{v:.0}"))
        .draw()
        .map_err(err)?;
    chart
        .draw_series(LineSeries::new(
            [(m.passband_edge_hz, floor), (m.passband_edge_hz, 2.0)],
            LIMIT.stroke_width(1),
        ))
        .map_err(err)?;
    chart
        .draw_series(LineSeries::new(curve, TRACE.stroke_width(2)))
        .map_err(err)?;
    Ok(())
}
