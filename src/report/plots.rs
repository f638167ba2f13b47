//! The plots of the analysis: one validation-curve plot per learner and the
//! per-split scores of the top candidates.
//!
//! Invariants: a validation curve runs left to right from the simplest
//! setting to the most complex, so under-fitting sits on the left and
//! over-fitting on the right whatever the setting's direction; every
//! validation and training mean is one `point` element, every split score
//! one `point split-score` element; colours and sizes are fixed here.

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use crate::analysis::{Analysis, Band, Curve, SplitScores};

use super::error::ReportError;
use super::svg::Figure;

/// One drawn plot.
pub struct Plot {
    /// Stable name (the id is `plot-<name>`).
    pub name: String,
    pub title: String,
    pub svg: String,
    /// The key, drawn in HTML under the plot so it never hides data.
    pub legend: Vec<Key>,
}

/// How a key entry looks.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Swatch {
    Dot,
    Ring,
    Line,
    Dashed,
    Block,
}

/// One entry of a plot's key.
#[derive(Clone, Debug, PartialEq)]
pub struct Key {
    pub swatch: Swatch,
    pub colour: RGBColor,
    /// 0 to 1.
    pub opacity: f64,
    pub text: String,
}

fn key(swatch: Swatch, colour: RGBColor, text: impl Into<String>) -> Key {
    Key {
        swatch,
        colour,
        opacity: 1.0,
        text: text.into(),
    }
}

pub const WIDTH: u32 = 1040;
const FONT: &str = "sans-serif";

pub const VALIDATION: [RGBColor; 4] = [
    RGBColor(31, 95, 168),
    RGBColor(106, 61, 154),
    RGBColor(0, 128, 117),
    RGBColor(141, 110, 99),
];
pub const TRAINING: RGBColor = RGBColor(217, 119, 6);
pub const CHOSEN: RGBColor = RGBColor(198, 40, 40);
pub const BEST: RGBColor = RGBColor(46, 125, 50);
pub const GRID: RGBColor = RGBColor(232, 232, 232);
pub const MUTED: RGBColor = RGBColor(120, 120, 120);
const BAND: RGBColor = RGBColor(31, 95, 168);
const PAIRING: RGBColor = RGBColor(214, 214, 214);

pub(super) fn draw_error(plot: &str, e: impl std::fmt::Display) -> ReportError {
    ReportError::Draw {
        plot: plot.to_string(),
        message: e.to_string(),
    }
}

/// Where a setting value sits on the x axis: log10 when the curve is on a
/// log scale, negated when larger values are simpler, so complexity rises
/// to the right.
#[derive(Clone, Copy)]
struct Axis {
    log: bool,
    flip: bool,
}

impl Axis {
    fn pos(self, v: f64) -> f64 {
        let x = if self.log { v.log10() } else { v };
        if self.flip { -x } else { x }
    }
}

/// A setting value for an axis label: up to four significant digits, no
/// trailing zeros.
pub fn short(v: f64) -> String {
    if v == 0.0 {
        return "0".into();
    }
    let digits = (3 - v.abs().log10().floor() as i32).clamp(0, 8) as usize;
    let text = format!("{v:.digits$}");
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    }
}

/// The y range covering every mean -/+ its error, the band and the baseline.
fn y_range(curves: &[&Curve], band: Option<&Band>, baseline: Option<f64>) -> (f64, f64) {
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    let mut take = |m: f64, se: Option<f64>| {
        let e = se.unwrap_or(0.0);
        lo = lo.min(m - e);
        hi = hi.max(m + e);
    };
    for c in curves {
        for p in &c.points {
            take(p.validation.mean, p.validation.se);
            if let Some(t) = &p.training {
                take(t.mean, t.se);
            }
        }
    }
    if let Some(b) = band {
        take(b.low, None);
        take(b.high, None);
    }
    if let Some(b) = baseline {
        take(b, None);
    }
    pad(lo, hi)
}

fn pad(lo: f64, hi: f64) -> (f64, f64) {
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.0, 1.0);
    }
    let span = if hi > lo {
        hi - lo
    } else {
        lo.abs().max(1.0) * 0.1
    };
    (lo - 0.06 * span, hi + 0.06 * span)
}

/// Tick positions and labels at the curves' own values, at most about
/// `max` of them: a value is labelled when it lies at least 1/`max` of the
/// axis from the last labelled one (so a log axis is not crowded at one
/// end).
fn ticks(axis: Axis, curves: &[&Curve], max: usize) -> Vec<(f64, String)> {
    let mut values: Vec<f64> = curves
        .iter()
        .flat_map(|c| c.points.iter().map(|p| p.value))
        .collect();
    values.sort_by(|a, b| axis.pos(*a).total_cmp(&axis.pos(*b)));
    values.dedup();
    let (first, last) = match (values.first(), values.last()) {
        (Some(&a), Some(&b)) => (axis.pos(a), axis.pos(b)),
        _ => return Vec::new(),
    };
    let gap = (last - first) / max.max(1) as f64;
    let mut out: Vec<(f64, String)> = Vec::new();
    for v in values {
        let x = axis.pos(v);
        if out.last().is_none_or(|(prev, _)| x - prev >= gap) {
            out.push((x, short(v)));
        }
    }
    out
}

/// Tick marks and labels under the plotting area at `ticks`.
fn x_ticks(
    root: &DrawingArea<super::svg::TaggedSvg, plotters::coord::Shift>,
    chart: &Chart<'_, '_>,
    y: f64,
    ticks: &[(f64, String)],
) -> DrawResult {
    let style = (FONT, 16)
        .into_font()
        .color(&BLACK)
        .pos(Pos::new(HPos::Center, VPos::Top));
    for (x, text) in ticks {
        let (px, py) = chart.backend_coord(&(*x, y));
        root.draw(&PathElement::new([(px, py), (px, py + 5)], BLACK))?;
        root.draw(&Text::new(text.clone(), (px, py + 8), style.clone()))?;
    }
    Ok(())
}

/// Row labels drawn beside the plotting area, right-aligned at its left
/// edge, at the y positions `ys`.
pub(super) fn row_labels<X, Y>(
    root: &DrawingArea<super::svg::TaggedSvg, plotters::coord::Shift>,
    chart: &ChartContext<'_, super::svg::TaggedSvg, Cartesian2d<X, Y>>,
    x: X::ValueType,
    rows: &[(Y::ValueType, String)],
) -> Result<(), DrawingAreaErrorKind<std::io::Error>>
where
    X: plotters::coord::ranged1d::Ranged,
    Y: plotters::coord::ranged1d::Ranged,
    X::ValueType: Clone,
    Y::ValueType: Clone,
{
    let style = (FONT, 16)
        .into_font()
        .color(&BLACK)
        .pos(Pos::new(HPos::Right, VPos::Center));
    for (y, text) in rows {
        let (px, py) = chart.backend_coord(&(x.clone(), y.clone()));
        root.draw(&Text::new(text.clone(), (px - 10, py), style.clone()))?;
    }
    Ok(())
}

fn curve_name(c: &Curve) -> String {
    if c.fixed.is_empty() {
        String::new()
    } else {
        let parts: Vec<String> = c.fixed.iter().map(|(k, v)| format!("{k}={v}")).collect();
        format!(" ({})", parts.join(" "))
    }
}

/// The baseline, when it lies near enough to the curves to be drawn
/// without squeezing them (within half their span).
fn near_baseline(curves: &[&Curve], band: Option<&Band>, baseline: Option<f64>) -> Option<f64> {
    let (lo, hi) = y_range(curves, band, None);
    let b = baseline?;
    let reach = 0.5 * (hi - lo);
    (b >= lo - reach && b <= hi + reach).then_some(b)
}

/// The validation-curve plot of one learner's curves.
pub fn curve_plot(a: &Analysis, learner: &str, curves: &[&Curve]) -> Result<Plot, ReportError> {
    let name = format!("curve-{}", slug(learner));
    let setting = curves
        .first()
        .map_or("setting", |c| c.setting.as_str())
        .to_string();
    let title = format!("{learner}: {} against {setting}", a.metric);
    let baseline = a.baseline.as_ref().and_then(|b| b.mean);
    let shown_baseline = near_baseline(curves, a.one_se_band.as_ref(), baseline);
    let log = curves.iter().all(|c| c.log_scale);
    let flip = curves.first().is_some_and(|c| c.simpler_with_larger_values);
    let axis = Axis { log, flip };
    let (fig, backend) = Figure::new((WIDTH, 430));
    let e = |err: DrawingAreaErrorKind<std::io::Error>| draw_error(&name, err);
    {
        let xs: Vec<f64> = curves
            .iter()
            .flat_map(|c| c.points.iter())
            .map(|p| axis.pos(p.value))
            .collect();
        let (x0, x1) = xs
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| {
                (a.min(x), b.max(x))
            });
        let (x0, x1) = if x1 > x0 {
            (x0 - 0.04 * (x1 - x0), x1 + 0.04 * (x1 - x0))
        } else {
            (x0 - 1.0, x0 + 1.0)
        };
        let (y0, y1) = y_range(curves, a.one_se_band.as_ref(), shown_baseline);
        let root = backend.into_drawing_area();
        root.fill(&WHITE).map_err(e)?;
        let mut chart = ChartBuilder::on(&root)
            .margin(14)
            .margin_right(24)
            .x_label_area_size(56)
            .y_label_area_size(70)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(e)?;
        let direction = if a.larger_is_better {
            "higher is better"
        } else {
            "lower is better"
        };
        let scale = if log { ", log scale" } else { "" };
        let gap = "\u{a0}".repeat(8);
        let x_desc = format!(
            "\u{2190} simpler (under-fits){gap}{setting}{scale}{gap}more complex (over-fits) \u{2192}"
        );
        chart
            .configure_mesh()
            .light_line_style(WHITE.mix(0.0))
            .bold_line_style(GRID)
            .x_labels(0)
            .y_labels(8)
            .x_desc(x_desc)
            .y_desc(format!("{} ({direction})", a.metric))
            .y_label_formatter(&|y| format!("{y:.3}"))
            .label_style((FONT, 16))
            .axis_desc_style((FONT, 17))
            .draw()
            .map_err(e)?;
        let ticks = ticks(axis, curves, 14);
        chart
            .draw_series(
                ticks
                    .iter()
                    .map(|(x, _)| PathElement::new([(*x, y0), (*x, y1)], GRID)),
            )
            .map_err(e)?;
        x_ticks(&root, &chart, y0, &ticks).map_err(e)?;
        if let Some(b) = &a.one_se_band {
            fig.tagged("band one-se", || {
                chart
                    .draw_series([Rectangle::new(
                        [(x0, b.low), (x1, b.high)],
                        BAND.mix(0.10).filled(),
                    )])
                    .map(drop)
            })
            .map_err(e)?;
        }
        if let Some(base) = shown_baseline {
            fig.tagged("baseline", || {
                chart
                    .draw_series(DashedLineSeries::new(
                        [(x0, base), (x1, base)],
                        6,
                        4,
                        MUTED.stroke_width(1),
                    ))
                    .map(drop)
            })
            .map_err(e)?;
        }
        for (i, c) in curves.iter().enumerate() {
            draw_curve(&fig, &mut chart, axis, c, (i, curves.len() > 1)).map_err(e)?;
        }
        draw_markers(&fig, &mut chart, axis, curves).map_err(e)?;
    }
    let svg = fig.finish(&format!("plot-{name}"), "curve", &title);
    let legend = curve_legend(a, curves, baseline, shown_baseline.is_some());
    Ok(Plot {
        name,
        title,
        svg,
        legend,
    })
}

fn curve_legend(a: &Analysis, curves: &[&Curve], baseline: Option<f64>, drawn: bool) -> Vec<Key> {
    let mut keys = Vec::new();
    let named = curves.len() > 1;
    for (i, c) in curves.iter().enumerate() {
        let suffix = if named { curve_name(c) } else { String::new() };
        let colour = VALIDATION[i % VALIDATION.len()];
        keys.push(key(
            Swatch::Dot,
            colour,
            format!("validation mean \u{00b1} SE{suffix}"),
        ));
        if c.points.iter().any(|p| p.training.is_some()) {
            let (tc, opacity) = training_colour(colour, named);
            keys.push(Key {
                opacity,
                ..key(
                    Swatch::Ring,
                    tc,
                    format!("training mean \u{00b1} SE{suffix}"),
                )
            });
        }
    }
    if a.one_se_band.is_some() {
        keys.push(Key {
            opacity: 0.25,
            ..key(Swatch::Block, BAND, "best mean \u{00b1} one SE")
        });
    }
    if curves.iter().any(|c| c.points.iter().any(|p| p.chosen)) {
        keys.push(key(Swatch::Ring, CHOSEN, "chosen"));
    }
    if a.best.id != a.chosen.id && curves.iter().any(|c| c.points.iter().any(|p| p.best)) {
        keys.push(key(Swatch::Ring, BEST, "best mean"));
    }
    if let Some(b) = baseline {
        let where_ = if drawn {
            ""
        } else {
            ", outside the plotted range"
        };
        keys.push(key(
            Swatch::Dashed,
            MUTED,
            format!("baseline {}{where_}", crate::analysis::number(b)),
        ));
    }
    keys
}

/// The training colour of a curve: the one training colour for a single
/// curve, the curve's own hue, lighter, when there are several.
fn training_colour(colour: RGBColor, named: bool) -> (RGBColor, f64) {
    if named {
        (colour, 0.55)
    } else {
        (TRAINING, 1.0)
    }
}

pub fn slug(text: &str) -> String {
    text.chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() {
                c.to_ascii_lowercase()
            } else {
                '-'
            }
        })
        .collect()
}

type Chart<'a, 'b> = ChartContext<
    'a,
    super::svg::TaggedSvg,
    Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
>;

type DrawResult = Result<(), DrawingAreaErrorKind<std::io::Error>>;

/// Vertical error bars at `(x, mean, se)`.
fn bars(points: &[(f64, f64, Option<f64>)], style: ShapeStyle) -> Vec<PathElement<(f64, f64)>> {
    points
        .iter()
        .filter_map(|&(x, m, se)| {
            se.filter(|s| *s > 0.0)
                .map(|s| PathElement::new([(x, m - s), (x, m + s)], style))
        })
        .collect()
}

fn draw_curve(
    fig: &Figure,
    chart: &mut Chart<'_, '_>,
    axis: Axis,
    c: &Curve,
    (i, named): (usize, bool),
) -> DrawResult {
    let colour = VALIDATION[i % VALIDATION.len()];
    let val: Vec<(f64, f64, Option<f64>)> = c
        .points
        .iter()
        .map(|p| (axis.pos(p.value), p.validation.mean, p.validation.se))
        .collect();
    let train: Vec<(f64, f64, Option<f64>)> = c
        .points
        .iter()
        .filter_map(|p| {
            p.training
                .as_ref()
                .map(|t| (axis.pos(p.value), t.mean, t.se))
        })
        .collect();
    if !train.is_empty() {
        let (tc, opacity) = training_colour(colour, named);
        let tc = tc.mix(opacity);
        fig.tagged("line training", || {
            chart
                .draw_series(DashedLineSeries::new(
                    train.iter().map(|&(x, m, _)| (x, m)),
                    7,
                    4,
                    tc.stroke_width(2),
                ))
                .map(drop)
        })?;
        fig.tagged("errorbar training", || {
            chart
                .draw_series(bars(&train, tc.stroke_width(1)))
                .map(drop)
        })?;
        fig.tagged("point training", || {
            chart
                .draw_series(
                    train
                        .iter()
                        .map(|&(x, m, _)| Circle::new((x, m), 4, tc.stroke_width(2))),
                )
                .map(drop)
        })?;
    }
    fig.tagged("line validation", || {
        chart
            .draw_series(LineSeries::new(
                val.iter().map(|&(x, m, _)| (x, m)),
                colour.stroke_width(2),
            ))
            .map(drop)
    })?;
    fig.tagged("errorbar validation", || {
        chart
            .draw_series(bars(&val, colour.stroke_width(1)))
            .map(drop)
    })?;
    fig.tagged("point validation", || {
        chart
            .draw_series(
                val.iter()
                    .map(|&(x, m, _)| Circle::new((x, m), 4, colour.filled())),
            )
            .map(drop)
    })
}

/// Where a marker's label goes: up and to the right of the point, or to
/// the left near the right edge so it is not cut off.
fn label_place(right_side: bool, colour: RGBColor) -> ((i32, i32), TextStyle<'static>) {
    let (dx, h) = if right_side {
        (-11, HPos::Right)
    } else {
        (11, HPos::Left)
    };
    let style = (FONT, 18)
        .into_font()
        .color(&colour)
        .pos(Pos::new(h, VPos::Bottom));
    ((dx, -12), style)
}

fn draw_markers(
    fig: &Figure,
    chart: &mut Chart<'_, '_>,
    axis: Axis,
    curves: &[&Curve],
) -> DrawResult {
    let (x0, x1) = {
        let r = chart.x_range();
        (r.start, r.end)
    };
    for p in curves.iter().flat_map(|c| c.points.iter()) {
        let at = (axis.pos(p.value), p.validation.mean);
        let right = at.0 > x0 + 0.7 * (x1 - x0);
        if p.best && !p.chosen {
            fig.tagged("marker best", || {
                chart.draw_series([Circle::new(at, 9, BEST.stroke_width(2))])?;
                let (offset, style) = label_place(right, BEST);
                chart
                    .draw_series([EmptyElement::at(at) + Text::new("best mean", offset, style)])
                    .map(drop)
            })?;
        }
        if p.chosen {
            let text = if p.best {
                "chosen (best mean)"
            } else {
                "chosen"
            };
            fig.tagged("marker chosen", || {
                chart.draw_series([Circle::new(at, 9, CHOSEN.stroke_width(3))])?;
                let (offset, style) = label_place(right, CHOSEN);
                chart
                    .draw_series([EmptyElement::at(at) + Text::new(text, offset, style)])
                    .map(drop)
            })?;
        }
    }
    Ok(())
}

/// The per-split scores of the top candidates: one row per candidate,
/// one dot per split, grey lines joining a split's dots (scores on one
/// split are paired), a bar at each mean.
pub fn split_plot(a: &Analysis) -> Result<Plot, ReportError> {
    let name = "split-scores".to_string();
    let title = format!(
        "{} on each outer split, top candidates and the baseline",
        a.metric
    );
    let rows = &a.top;
    let n = rows.len().max(1);
    let height = (70 + 46 * n as u32).max(200);
    let (fig, backend) = Figure::new((WIDTH, height));
    let e = |err: String| draw_error(&name, err);
    {
        let off = off_scale(rows);
        let (lo, hi) = score_range(rows, &off);
        let root = backend.into_drawing_area();
        root.fill(&WHITE).map_err(|x| e(x.to_string()))?;
        let labels: Vec<String> = rows
            .iter()
            .zip(&off)
            .map(|(r, &o)| row_label(r, o))
            .collect();
        let mut chart = ChartBuilder::on(&root)
            .margin(14)
            .x_label_area_size(44)
            .y_label_area_size(360)
            .build_cartesian_2d(lo..hi, -0.6..n as f64 - 0.4)
            .map_err(|x| e(x.to_string()))?;
        let direction = if a.larger_is_better {
            "higher is better"
        } else {
            "lower is better"
        };
        chart
            .configure_mesh()
            .bold_line_style(GRID)
            .light_line_style(WHITE.mix(0.0))
            .x_desc(format!("{} ({direction})", a.metric))
            .x_labels(10)
            .x_label_formatter(&|x| format!("{x:.3}"))
            .y_labels(0)
            .label_style((FONT, 16))
            .axis_desc_style((FONT, 17))
            .draw()
            .map_err(|x| e(x.to_string()))?;
        draw_splits(&fig, &mut chart, rows, &off, (lo, hi)).map_err(|x| e(x.to_string()))?;
        let at: Vec<(f64, String)> = labels
            .into_iter()
            .enumerate()
            .map(|(i, l)| ((n - 1 - i) as f64, l))
            .collect();
        row_labels(&root, &chart, lo, &at).map_err(|x| e(x.to_string()))?;
    }
    let svg = fig.finish(&format!("plot-{name}"), "splits", &title);
    let legend = vec![
        key(Swatch::Dot, VALIDATION[0], "score on one split"),
        key(Swatch::Dot, CHOSEN, "the chosen candidate's"),
        key(Swatch::Dot, MUTED, "the baseline's"),
        key(Swatch::Line, BLACK, "mean"),
        key(Swatch::Line, PAIRING, "one split across candidates"),
    ];
    Ok(Plot {
        name,
        title,
        svg,
        legend,
    })
}

fn row_label(s: &SplitScores, off: bool) -> String {
    let mut label: String = s.label.chars().take(48).collect();
    if s.label.chars().count() > 48 {
        label.push('\u{2026}');
    }
    if off {
        let mean = s.mean.map_or("-".into(), crate::analysis::number);
        return format!("{label}  [baseline, mean {mean}, off the scale]");
    }
    match (s.chosen, s.best, s.reference) {
        (true, _, _) => format!("{label}  [chosen]"),
        (_, true, _) => format!("{label}  [best mean]"),
        (_, _, true) => format!("{label}  [baseline]"),
        _ => label,
    }
}

fn score_range(rows: &[SplitScores], off: &[bool]) -> (f64, f64) {
    let (lo, hi) = span(rows.iter().zip(off).filter(|(_, o)| !**o).map(|(r, _)| r));
    pad(lo, hi)
}

fn span<'a>(rows: impl Iterator<Item = &'a SplitScores>) -> (f64, f64) {
    let all = rows.flat_map(|r| r.scores.iter().flatten().copied());
    all.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
        (a.min(x), b.max(x))
    })
}

/// Which rows are left off the scale: a baseline row with a score more
/// than half the other rows' span beyond them (drawing it would squeeze
/// the candidates that matter into a corner).
fn off_scale(rows: &[SplitScores]) -> Vec<bool> {
    let (lo, hi) = span(rows.iter().filter(|r| !r.reference));
    let reach = 0.5 * (hi - lo).max(0.0);
    rows.iter()
        .map(|r| {
            r.reference
                && lo.is_finite()
                && r.scores
                    .iter()
                    .flatten()
                    .any(|&s| s < lo - reach || s > hi + reach)
        })
        .collect()
}

type SplitChart<'a> = Chart<'a, 'a>;

fn draw_splits(
    fig: &Figure,
    chart: &mut SplitChart<'_>,
    rows: &[SplitScores],
    off: &[bool],
    (lo, hi): (f64, f64),
) -> DrawResult {
    let n = rows.len();
    let splits = rows.first().map_or(0, |r| r.scores.len());
    let y = |row: usize, j: usize| {
        let spread = if splits > 1 {
            j as f64 / (splits - 1) as f64 - 0.5
        } else {
            0.0
        };
        (n - 1 - row) as f64 + 0.5 * spread
    };
    if let Some(c) = rows.iter().position(|r| r.chosen) {
        let yc = (n - 1 - c) as f64;
        fig.tagged("highlight chosen", || {
            chart
                .draw_series([Rectangle::new(
                    [(lo, yc - 0.42), (hi, yc + 0.42)],
                    RGBColor(255, 244, 214).filled(),
                )])
                .map(drop)
        })?;
    }
    fig.tagged("pairing", || {
        chart
            .draw_series((0..splits).map(|j| {
                let path: Vec<(f64, f64)> = rows
                    .iter()
                    .enumerate()
                    .filter(|(i, _)| !off[*i])
                    .filter_map(|(i, r)| r.scores[j].map(|s| (s, y(i, j))))
                    .collect();
                PathElement::new(path, PAIRING.stroke_width(1))
            }))
            .map(drop)
    })?;
    for (i, r) in rows.iter().enumerate().filter(|(i, _)| !off[*i]) {
        let colour = if r.reference {
            MUTED
        } else if r.chosen {
            CHOSEN
        } else {
            VALIDATION[0]
        };
        if let Some(m) = r.mean {
            let yc = (n - 1 - i) as f64;
            fig.tagged("mean", || {
                chart
                    .draw_series([PathElement::new(
                        [(m, yc - 0.36), (m, yc + 0.36)],
                        BLACK.stroke_width(2),
                    )])
                    .map(drop)
            })?;
        }
        fig.tagged("point split-score", || {
            chart
                .draw_series(r.scores.iter().enumerate().filter_map(|(j, s)| {
                    s.map(|s| Circle::new((s, y(i, j)), 4, colour.mix(0.85).filled()))
                }))
                .map(drop)
        })?;
    }
    Ok(())
}
