//! The one look of every picture rerate draws (`verify`, `grade`, `tradeoff`): a light
//! paper, dark ink, the colours of each kind of mark, the font and its sizes, the level
//! colour scale and its legend bar, and a legend strip drawn beside a chart (never over
//! its data).

use anyhow::{anyhow, Result};
use plotters::coord::Shift;
use plotters::prelude::*;

use super::format::plain;

/// The embedded font (every picture looks the same on every machine).
pub const FONT_BYTES: &[u8] = include_bytes!("../../assets/DejaVuSansMono.ttf");
/// The family name the font is registered under.
pub const FAMILY: &str = "sans-serif";

/// Title of a picture, pixels.
pub const TITLE_PX: u32 = 21;
/// Caption of a panel.
pub const CAPTION_PX: u32 = 16;
/// Tick labels, axis names and legends.
pub const LABEL_PX: u32 = 13;

/// Background.
pub const PAPER: RGBColor = RGBColor(252, 251, 247);
/// Text, axes.
pub const INK: RGBColor = RGBColor(38, 42, 50);
/// Grid lines.
pub const GRID: RGBColor = RGBColor(222, 220, 212);
/// A measured curve.
pub const MEASURED: RGBColor = RGBColor(28, 86, 150);
/// Measurements of the edge probes.
pub const PROBE: RGBColor = RGBColor(196, 110, 20);
/// The requested level.
pub const REQUEST: RGBColor = RGBColor(176, 48, 56);
/// The shaded margin below the requested level.
pub const MARGIN: RGBColor = RGBColor(120, 178, 128);
/// Shading where the measurement exceeds the requested level.
pub const SHORTFALL: RGBColor = RGBColor(222, 96, 80);
/// Band edges and other reference marks.
pub const MARK: RGBColor = RGBColor(120, 120, 120);
/// Further series (baselines of `tradeoff`, the second phase).
pub const SERIES: [RGBColor; 5] = [
    RGBColor(176, 48, 56),
    RGBColor(196, 110, 20),
    RGBColor(110, 80, 160),
    RGBColor(50, 140, 90),
    RGBColor(90, 90, 90),
];

/// The font at `px` pixels, in ink.
pub fn font(px: u32) -> TextStyle<'static> {
    (FAMILY, px).into_font().color(&INK)
}

/// Register the embedded font (once per picture; registering again is harmless).
pub fn register_font() -> Result<()> {
    plotters::style::register_font(FAMILY, FontStyle::Normal, FONT_BYTES)
        .map_err(|_| anyhow!("the embedded font cannot be read"))
}

/// Colour of a level `u` in `0..=1` (0: the floor, 1: the reference level): from the paper
/// through sand, sage and blue to a deep ink, so that loud components are dark on the
/// light background and the floor disappears into it.
pub fn level_colour(u: f64) -> RGBColor {
    const STOPS: [(f64, (f64, f64, f64)); 5] = [
        (0.0, (252.0, 251.0, 247.0)),
        (0.3, (232.0, 220.0, 170.0)),
        (0.55, (128.0, 180.0, 150.0)),
        (0.8, (40.0, 100.0, 160.0)),
        (1.0, (24.0, 26.0, 64.0)),
    ];
    let u = if u.is_nan() { 0.0 } else { u.clamp(0.0, 1.0) };
    for w in STOPS.windows(2) {
        let ((a, ca), (b, cb)) = (w[0], w[1]);
        if u <= b {
            let t = (u - a) / (b - a);
            let mix = |x: f64, y: f64| (x + (y - x) * t).round() as u8;
            return RGBColor(mix(ca.0, cb.0), mix(ca.1, cb.1), mix(ca.2, cb.2));
        }
    }
    RGBColor(24, 26, 64)
}

/// A vertical colour scale in `area`: the bar of [`level_colour`] from `lo_db` (bottom) to
/// `hi_db` (top), ticks every `step_db`, and its name above.
pub fn colour_bar<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    lo_db: f64,
    hi_db: f64,
    step_db: f64,
    name: &str,
) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    let mut chart = ChartBuilder::on(area)
        .margin_top(40)
        .margin_bottom(60)
        .margin_right(8)
        .y_label_area_size(0)
        .right_y_label_area_size(48)
        .caption(name, font(LABEL_PX))
        .build_cartesian_2d(0.0..1.0, lo_db..hi_db)
        .map_err(err)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .disable_x_axis()
        .axis_style(INK)
        .y_labels(((hi_db - lo_db) / step_db).round() as usize + 1)
        .label_style(font(LABEL_PX))
        .y_label_formatter(&|v| plain(*v))
        .draw()
        .map_err(err)?;
    let steps = 200;
    chart
        .draw_series((0..steps).map(|i| {
            let a = lo_db + (hi_db - lo_db) * i as f64 / steps as f64;
            let b = lo_db + (hi_db - lo_db) * (i + 1) as f64 / steps as f64;
            let u = (0.5 * (a + b) - lo_db) / (hi_db - lo_db);
            Rectangle::new([(0.0, a), (1.0, b)], level_colour(u).filled())
        }))
        .map_err(err)?;
    chart
        .draw_series(std::iter::once(Rectangle::new(
            [(0.0, lo_db), (1.0, hi_db)],
            INK.stroke_width(1),
        )))
        .map_err(err)?;
    Ok(())
}

/// Height of one row of a legend strip, pixels.
pub const LEGEND_ROW_PX: u32 = 22;

/// What a legend entry shows.
#[derive(Debug, Clone, Copy)]
pub enum Swatch {
    /// A line of this colour and width.
    Line(RGBColor, u32),
    /// A dashed line.
    Dashed(RGBColor),
    /// A filled block (a shaded area).
    Fill(RGBColor, f64),
    /// A dot.
    Dot(RGBColor),
}

/// Legend entries across `area` (a strip above or below a chart, so that the legend never
/// covers data), left to right, wrapping onto further rows of [`LEGEND_ROW_PX`] when the
/// strip is too narrow.
pub fn legend_strip<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    items: &[(String, Swatch)],
) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow!("{e}");
    let (w, h) = area.dim_in_pixel();
    let rows_fit = (h / LEGEND_ROW_PX).max(1) as i32;
    let row_px = LEGEND_ROW_PX as i32;
    let top = (h as i32 - rows_fit * row_px) / 2;
    let (left, right) = (90_i32, w as i32 - 20);
    let mut row = 0;
    let mut x = left;
    for (label, swatch) in items {
        let text_w = area
            .estimate_text_size(label, &font(LABEL_PX))
            .map_err(err)?
            .0 as i32;
        let need = 34 + text_w;
        if x + need > right && x > left {
            row += 1;
            x = left;
        }
        if row >= rows_fit {
            break;
        }
        let y = top + row * row_px + row_px / 2;
        match *swatch {
            Swatch::Line(c, width) => area
                .draw(&PathElement::new(
                    vec![(x, y), (x + 26, y)],
                    c.stroke_width(width),
                ))
                .map_err(err)?,
            Swatch::Dashed(c) => {
                for k in 0..3 {
                    let a = x + k * 10;
                    area.draw(&PathElement::new(
                        vec![(a, y), (a + 6, y)],
                        c.stroke_width(2),
                    ))
                    .map_err(err)?;
                }
            }
            Swatch::Fill(c, alpha) => area
                .draw(&Rectangle::new(
                    [(x, y - 6), (x + 26, y + 6)],
                    c.mix(alpha).filled(),
                ))
                .map_err(err)?,
            Swatch::Dot(c) => area
                .draw(&Circle::new((x + 13, y), 4, c.filled()))
                .map_err(err)?,
        }
        area.draw(&Text::new(
            label.clone(),
            (x + 34, y - LABEL_PX as i32 / 2),
            font(LABEL_PX),
        ))
        .map_err(err)?;
        x += need + 30;
    }
    Ok(())
}
