//! Line charts as standalone SVG, written by hand (no dependency): stacked
//! panels sharing one x axis, each with labelled axes, ticks and grid
//! lines, one polyline per series, and one legend for the series the
//! panels share.
//!
//! Structure, for tools and tests: every axis title is a `<text
//! class="axis-label">`, every series a `<g class="series"
//! data-series="LABEL">`, every legend entry a `<g class="legend-entry">`.
//! Colours are the ten-colour qualitative palette common in plotting
//! libraries (common practice); beyond ten series they repeat with dashes.
//! O(panels * series * points) time and output.

use std::fmt::Write;

/// One line: a label and one value per x.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// Shown in the legend (and in `data-series`).
    pub label: String,
    /// One value per point of the chart's x.
    pub values: Vec<f64>,
}

/// One panel: a y axis and its lines.
#[derive(Clone, Debug, PartialEq)]
pub struct Panel {
    /// The y axis title.
    pub y_label: String,
    /// The lines; when `shared`, series k has the legend's colour k.
    pub series: Vec<Series>,
    /// Whether the series are the legend's (else drawn in black, labelled in place).
    pub shared: bool,
}

/// A chart.
#[derive(Clone, Debug, PartialEq)]
pub struct Chart {
    /// The heading.
    pub title: String,
    /// A line of small print under the heading (e.g. the model assumption).
    pub note: String,
    /// The x axis title.
    pub x_label: String,
    /// The x value of every point, increasing.
    pub x: Vec<f64>,
    /// Panels, top to bottom.
    pub panels: Vec<Panel>,
}

const PALETTE: [&str; 10] = [
    "#1f77b4", "#ff7f0e", "#2ca02c", "#d62728", "#9467bd", "#8c564b", "#e377c2", "#7f7f7f", "#bcbd22",
    "#17becf",
];
const DASHES: [&str; 3] = ["", "6 3", "2 3"];

const WIDTH: f64 = 1040.0;
const LEFT: f64 = 80.0;
const PLOT_WIDTH: f64 = 600.0;
const TOP: f64 = 70.0;
const PANEL_HEIGHT: f64 = 210.0;
const GAP: f64 = 50.0;
const LEGEND_X: f64 = LEFT + PLOT_WIDTH + 30.0;

/// The chart as an SVG document.
pub fn svg(chart: &Chart) -> String {
    let panels = chart.panels.len() as f64;
    let height = TOP + panels * (PANEL_HEIGHT + GAP) + 30.0;
    let mut out = String::new();
    let _ = writeln!(
        out,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH}" height="{height}" viewBox="0 0 {WIDTH} {height}" font-family="sans-serif">"#
    );
    let _ = writeln!(out, r#"<rect width="100%" height="100%" fill="white"/>"#);
    let _ = writeln!(
        out,
        r#"<text class="title" x="{LEFT}" y="28" font-size="17" font-weight="bold">{}</text>"#,
        escape(&chart.title)
    );
    let _ = writeln!(
        out,
        r##"<text class="note" x="{LEFT}" y="48" font-size="11" fill="#555">{}</text>"##,
        escape(&chart.note)
    );
    let (lo, hi) = range(&chart.x);
    // Widen to whole tick steps, so both ends carry a label.
    let step = tick_step(hi - lo);
    // (A quota rounded up to an integer lies a hair above its share: no extra step for it.)
    let (x0, x1) = (
        (lo / step + 1e-6).floor() * step,
        (hi / step - 1e-6).ceil() * step,
    );
    let x_ticks = ticks(x0, x1);
    let px = |x: f64| LEFT + (x - x0) / (x1 - x0).max(f64::MIN_POSITIVE) * PLOT_WIDTH;
    for (k, panel) in chart.panels.iter().enumerate() {
        let top = TOP + k as f64 * (PANEL_HEIGHT + GAP);
        let bottom = top + PANEL_HEIGHT;
        let max = panel
            .series
            .iter()
            .flat_map(|s| s.values.iter().copied())
            .fold(0.0f64, f64::max);
        let y_top = nice_ceiling(max);
        let y_ticks = ticks(0.0, y_top);
        let py = |y: f64| bottom - y / y_top * PANEL_HEIGHT;
        let _ = writeln!(out, r#"<g class="panel">"#);
        for &t in &y_ticks {
            let y = py(t);
            let _ = writeln!(
                out,
                r##"<line x1="{LEFT}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="#e3e3e3"/><text x="{:.1}" y="{:.1}" font-size="11" text-anchor="end">{}</text>"##,
                LEFT + PLOT_WIDTH,
                LEFT - 6.0,
                y + 4.0,
                label(t)
            );
        }
        for &t in &x_ticks {
            let x = px(t);
            let _ = writeln!(
                out,
                r##"<line x1="{x:.1}" y1="{top}" x2="{x:.1}" y2="{bottom}" stroke="#e3e3e3"/><text x="{x:.1}" y="{:.1}" font-size="11" text-anchor="middle">{}</text>"##,
                bottom + 16.0,
                label(t)
            );
        }
        let _ = writeln!(
            out,
            r##"<path d="M{LEFT},{top} V{bottom} H{:.1}" fill="none" stroke="#333"/>"##,
            LEFT + PLOT_WIDTH
        );
        let _ = writeln!(
            out,
            r#"<text class="axis-label" transform="translate({:.1},{:.1}) rotate(-90)" font-size="12" text-anchor="middle">{}</text>"#,
            LEFT - 52.0,
            top + PANEL_HEIGHT / 2.0,
            escape(&panel.y_label)
        );
        let _ = writeln!(
            out,
            r#"<text class="axis-label" x="{:.1}" y="{:.1}" font-size="12" text-anchor="middle">{}</text>"#,
            LEFT + PLOT_WIDTH / 2.0,
            bottom + 34.0,
            escape(&chart.x_label)
        );
        for (s, series) in panel.series.iter().enumerate() {
            let (colour, dash) = if panel.shared {
                (
                    PALETTE[s % PALETTE.len()],
                    DASHES[(s / PALETTE.len()) % DASHES.len()],
                )
            } else {
                ("#000000", "")
            };
            // Earlier lines are wider, so a line hidden under a later one still shows at its edges.
            let width = if panel.shared {
                (4.0 - 0.6 * s as f64).max(1.5)
            } else {
                2.5
            };
            let points: Vec<String> = chart
                .x
                .iter()
                .zip(&series.values)
                .map(|(&x, &y)| format!("{:.1},{:.1}", px(x), py(y)))
                .collect();
            let dash_attr = if dash.is_empty() {
                String::new()
            } else {
                format!(r#" stroke-dasharray="{dash}""#)
            };
            let _ = writeln!(
                out,
                r#"<g class="series" data-series="{}"><polyline points="{}" fill="none" stroke="{colour}" stroke-width="{width:.1}" stroke-linejoin="round"{dash_attr}/>"#,
                escape(&series.label),
                points.join(" ")
            );
            if chart.x.len() <= 60 {
                for p in &points {
                    let (x, y) = p.split_once(',').unwrap_or(("0", "0"));
                    let _ = write!(out, r#"<circle cx="{x}" cy="{y}" r="2.5" fill="{colour}"/>"#);
                }
                out.push('\n');
            }
            out.push_str("</g>\n");
        }
        out.push_str("</g>\n");
    }
    legend(chart, &mut out);
    out.push_str("</svg>\n");
    out
}

fn legend(chart: &Chart, out: &mut String) {
    let Some(panel) = chart.panels.iter().find(|p| p.shared) else {
        return;
    };
    let _ = writeln!(
        out,
        r#"<g class="legend"><text x="{LEGEND_X}" y="{}" font-size="12" font-weight="bold">Members</text>"#,
        TOP + 4.0
    );
    for (s, series) in panel.series.iter().enumerate() {
        let y = TOP + 24.0 + s as f64 * 20.0;
        let colour = PALETTE[s % PALETTE.len()];
        let dash = DASHES[(s / PALETTE.len()) % DASHES.len()];
        let dash_attr = if dash.is_empty() {
            String::new()
        } else {
            format!(r#" stroke-dasharray="{dash}""#)
        };
        let _ = writeln!(
            out,
            r#"<g class="legend-entry"><line x1="{LEGEND_X}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="{colour}" stroke-width="3"{dash_attr}/><text x="{:.1}" y="{:.1}" font-size="12">{}</text></g>"#,
            y - 4.0,
            LEGEND_X + 24.0,
            y - 4.0,
            LEGEND_X + 32.0,
            y,
            escape(&series.label)
        );
    }
    out.push_str("</g>\n");
}

fn range(x: &[f64]) -> (f64, f64) {
    let lo = x.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = x.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if !lo.is_finite() {
        return (0.0, 1.0);
    }
    if hi - lo < 1e-9 {
        return (lo - 0.5, hi + 0.5);
    }
    (lo, hi)
}

/// The least of 1, 2, 2.5, 5 times a power of ten at or above `v` (1 for 0).
fn nice_ceiling(v: f64) -> f64 {
    if v <= 0.0 || !v.is_finite() {
        return 1.0;
    }
    let p = 10f64.powf(v.log10().floor());
    [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * p)
        .find(|&c| c >= v * (1.0 - 1e-12))
        .unwrap_or(10.0 * p)
}

/// A round step giving about five ticks over `span`.
fn tick_step(span: f64) -> f64 {
    if span <= 0.0 || !span.is_finite() {
        return 1.0;
    }
    let raw = span / 5.0;
    let p = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * p)
        .find(|&s| s >= raw)
        .unwrap_or(10.0 * p)
}

/// About five round ticks covering [lo, hi].
fn ticks(lo: f64, hi: f64) -> Vec<f64> {
    let span = hi - lo;
    if span <= 0.0 || !span.is_finite() {
        return vec![lo];
    }
    let step = tick_step(span);
    let first = (lo / step).ceil() * step;
    let mut out = Vec::new();
    let mut k = 0.0;
    while first + k * step <= hi + step * 1e-9 {
        out.push(first + k * step);
        k += 1.0;
    }
    out
}

fn label(v: f64) -> String {
    let s = format!("{v:.3}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".to_string()
    } else {
        s.to_string()
    }
}

/// Input-derived text (titles, member and attribute names) for the SVG:
/// entities, characters XML 1.0 forbids replaced, hidden ones made visible.
fn escape(s: &str) -> std::borrow::Cow<'_, str> {
    crate::escape::xml(s)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_and_ceilings() {
        assert_eq!(ticks(50.0, 100.0), vec![50.0, 60.0, 70.0, 80.0, 90.0, 100.0]);
        assert_eq!(nice_ceiling(0.37), 0.5);
        assert_eq!(nice_ceiling(0.2), 0.2);
        assert_eq!(nice_ceiling(0.0), 1.0);
        assert_eq!(label(0.25), "0.25");
        assert_eq!(label(60.0), "60");
        assert_eq!(escape("a<b & \"c\""), "a&lt;b &amp; &quot;c&quot;");
    }
}
