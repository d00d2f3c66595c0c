//! Line charts (the sweep): stacked panels sharing one x axis, each with
//! labelled axes, ticks and grid lines, and marks at chosen x values (the
//! rule's own quota).
//!
//! Many series stay readable: up to [`DRAWN`] series are drawn alone, each
//! with its own colour, dash and marker shape and its label written at the
//! line's end. With more, the [`LABELLED`] largest (by their peak, summed over
//! the shared panels) are drawn so, and the rest are folded into one grey
//! band from their lowest to their highest value at each x, drawn with thin
//! lines inside and labelled with how many it holds; the legend names them.
//! Callers group series whose values coincide before they get here.
//!
//! Structure, for tools and tests: every axis title is a `<text
//! class="axis-label">`, every series a `<g class="series" data-series="LABEL">`
//! (`class="series folded"` inside the band), the band a `<g class="band"
//! data-series-count="N">`, every line-end label a `<text class="direct-label">`,
//! every legend entry a `<g class="legend-entry">`, every mark a `<g
//! class="quota-marker" data-x="X">` (one per panel).
//! O(panels * series * points) time and output.

use std::fmt::Write;

use super::{escape, nice_ceiling, number, shorten, tick_step, ticks, OKABE_ITO};

/// One line: a label and one value per x.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// Shown at the line's end and in the legend (and in `data-series`).
    pub label: String,
    /// One value per point of the chart's x.
    pub values: Vec<f64>,
}

/// One panel: a y axis and its lines.
#[derive(Clone, Debug, PartialEq)]
pub struct Panel {
    /// The y axis title.
    pub y_label: String,
    /// The lines; when `shared`, series k is the same member (row) in every
    /// shared panel and gets the same style.
    pub series: Vec<Series>,
    /// Whether the series are the legend's (else drawn in black, labelled in place).
    pub shared: bool,
}

/// A vertical mark at one x, in every panel.
#[derive(Clone, Debug, PartialEq)]
pub struct Marker {
    /// Where.
    pub x: f64,
    /// What, written at the top of the first panel.
    pub label: String,
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
    /// Marks, such as the rule's own quota; the x axis widens to show them.
    pub markers: Vec<Marker>,
}

/// Most shared series drawn each on its own.
pub const DRAWN: usize = 7;
/// Shared series drawn on their own when there are more than [`DRAWN`].
pub const LABELLED: usize = 6;

/// Colours of the drawn series: Okabe-Ito without black (black is for
/// unshared lines and marks), darkest first.
const COLOURS: [&str; 7] = [
    OKABE_ITO[6],
    OKABE_ITO[5],
    OKABE_ITO[3],
    OKABE_ITO[1],
    OKABE_ITO[7],
    OKABE_ITO[2],
    OKABE_ITO[4],
];
const DASHES: [&str; 4] = ["", "8 3", "2 3", "8 3 2 3"];

const WIDTH: f64 = 1100.0;
const LEFT: f64 = 80.0;
const PLOT_WIDTH: f64 = 580.0;
const RIGHT: f64 = LEFT + PLOT_WIDTH;
const TOP: f64 = 86.0;
const PANEL_HEIGHT: f64 = 230.0;
const GAP: f64 = 56.0;
const LEGEND_X: f64 = RIGHT + 190.0;
const LINE_GAP: f64 = 13.0;

/// Which shared series are drawn alone, in order of size (the rest fold
/// into the band).
pub fn emphasised(chart: &Chart) -> Vec<usize> {
    let shared: Vec<&Panel> = chart.panels.iter().filter(|p| p.shared).collect();
    let count = shared.iter().map(|p| p.series.len()).max().unwrap_or(0);
    let peak = |s: usize| -> f64 {
        shared
            .iter()
            .filter_map(|p| p.series.get(s))
            .map(|x| {
                x.values
                    .iter()
                    .copied()
                    .filter(|v| v.is_finite())
                    .fold(0.0, f64::max)
            })
            .sum()
    };
    let mut order: Vec<usize> = (0..count).collect();
    order.sort_by(|&a, &b| peak(b).total_cmp(&peak(a)).then(a.cmp(&b)));
    if count > DRAWN {
        order.truncate(LABELLED);
    }
    order
}

/// The style of the k-th drawn series.
struct Style {
    colour: &'static str,
    dash: &'static str,
    shape: usize,
}

fn style(k: usize) -> Style {
    Style {
        colour: COLOURS[k % COLOURS.len()],
        dash: DASHES[k % DASHES.len()],
        shape: k % 7,
    }
}

/// A marker shape centred at (x, y): circle, square, triangle, diamond,
/// triangle down, plus, cross; outlined so the pale colours show on white.
fn shape(kind: usize, x: f64, y: f64, colour: &str) -> String {
    let edge = r##"stroke="#1a1a1a" stroke-width="0.7""##;
    match kind {
        0 => format!(r#"<circle cx="{x:.1}" cy="{y:.1}" r="3.8" fill="{colour}" {edge}/>"#),
        1 => format!(
            r#"<rect x="{:.1}" y="{:.1}" width="7" height="7" fill="{colour}" {edge}/>"#,
            x - 3.5,
            y - 3.5
        ),
        2 => format!(
            r#"<path d="M{x:.1},{:.1} L{:.1},{:.1} L{:.1},{:.1} Z" fill="{colour}" {edge}/>"#,
            y - 4.8,
            x + 4.4,
            y + 3.4,
            x - 4.4,
            y + 3.4
        ),
        3 => format!(
            r#"<path d="M{x:.1},{:.1} L{:.1},{y:.1} L{x:.1},{:.1} L{:.1},{y:.1} Z" fill="{colour}" {edge}/>"#,
            y - 5.0,
            x + 4.5,
            y + 5.0,
            x - 4.5
        ),
        4 => format!(
            r#"<path d="M{x:.1},{:.1} L{:.1},{:.1} L{:.1},{:.1} Z" fill="{colour}" {edge}/>"#,
            y + 4.8,
            x + 4.4,
            y - 3.4,
            x - 4.4,
            y - 3.4
        ),
        5 => format!(
            r#"<path d="M{:.1},{y:.1} H{:.1} M{x:.1},{:.1} V{:.1}" stroke="{colour}" stroke-width="2.6"/>"#,
            x - 4.5,
            x + 4.5,
            y - 4.5,
            y + 4.5
        ),
        _ => format!(
            r#"<path d="M{:.1},{:.1} L{:.1},{:.1} M{:.1},{:.1} L{:.1},{:.1}" stroke="{colour}" stroke-width="2.6"/>"#,
            x - 3.8,
            y - 3.8,
            x + 3.8,
            y + 3.8,
            x - 3.8,
            y + 3.8,
            x + 3.8,
            y - 3.8
        ),
    }
}

fn dash_attribute(dash: &str) -> String {
    if dash.is_empty() {
        String::new()
    } else {
        format!(r#" stroke-dasharray="{dash}""#)
    }
}

/// Spreads label positions (wanted y, in order of any kind) so that no two
/// are closer than [`LINE_GAP`], keeping them within [top, bottom] when
/// there is room. Returns the new y of each, in the given order.
fn spread(wanted: &[f64], top: f64, bottom: f64) -> Vec<f64> {
    let mut order: Vec<usize> = (0..wanted.len()).collect();
    order.sort_by(|&a, &b| wanted[a].total_cmp(&wanted[b]));
    let mut placed = vec![0.0; wanted.len()];
    let mut last = f64::NEG_INFINITY;
    for &i in &order {
        let y = wanted[i].max(last + LINE_GAP).max(top);
        placed[i] = y;
        last = y;
    }
    // Past the bottom: push the run back up.
    let mut limit = bottom;
    for &i in order.iter().rev() {
        if placed[i] > limit {
            placed[i] = limit;
        }
        limit = placed[i] - LINE_GAP;
    }
    placed
}

/// The chart as an SVG document.
pub fn svg(chart: &Chart) -> String {
    let panels = chart.panels.len() as f64;
    let drawn = emphasised(chart);
    let shared_count = chart
        .panels
        .iter()
        .filter(|p| p.shared)
        .map(|p| p.series.len())
        .max()
        .unwrap_or(0);
    let folded: Vec<usize> = (0..shared_count).filter(|s| !drawn.contains(s)).collect();
    let legend_lines = drawn.len()
        + if folded.is_empty() {
            0
        } else {
            2 + folded.len().min(24)
        };
    let height = (TOP + panels * (PANEL_HEIGHT + GAP) + 30.0).max(TOP + 40.0 + legend_lines as f64 * 18.0);
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
        r##"<text class="note" x="{LEFT}" y="48" font-size="11" fill="#444">{}</text>"##,
        escape(&chart.note)
    );
    let (lo, hi) = range(chart.x.iter().chain(chart.markers.iter().map(|m| &m.x)));
    // Widen to whole tick steps, so both ends carry a label.
    let step = tick_step(hi - lo);
    // (A quota rounded up to an integer lies a hair above its share: no extra step for it.)
    let (x0, x1) = (
        (lo / step + 1e-6).floor() * step,
        (hi / step - 1e-6).ceil() * step,
    );
    let x_ticks = ticks(x0, x1);
    let px = |x: f64| LEFT + (x - x0) / (x1 - x0).max(f64::MIN_POSITIVE) * PLOT_WIDTH;
    // Markers only on a subset of points, offset per series, so they stay apart.
    let every = chart.x.len().div_ceil(12).max(1);
    for (k, panel) in chart.panels.iter().enumerate() {
        let top = TOP + k as f64 * (PANEL_HEIGHT + GAP);
        let bottom = top + PANEL_HEIGHT;
        let max = panel
            .series
            .iter()
            .flat_map(|s| s.values.iter().copied())
            .filter(|v| v.is_finite())
            .fold(0.0f64, f64::max);
        let y_top = nice_ceiling(max);
        let py = |y: f64| bottom - y.clamp(0.0, y_top) / y_top * PANEL_HEIGHT;
        let _ = writeln!(out, r#"<g class="panel">"#);
        axes(&mut out, chart, panel, (top, bottom), y_top, &x_ticks, &px);
        let points = |values: &[f64]| -> Vec<Point> {
            chart
                .x
                .iter()
                .zip(values)
                .map(|(&x, &y)| (px(x), py(y)))
                .collect()
        };
        // Line-end labels: (wanted y, text, shape or none, colour).
        let mut ends: Vec<(f64, String, Option<usize>, &str)> = Vec::new();
        if panel.shared {
            let rows: Vec<&Series> = folded.iter().filter_map(|&s| panel.series.get(s)).collect();
            if !rows.is_empty() {
                band(&mut out, chart, &rows, &points);
                let last = chart.x.len().saturating_sub(1);
                let hi = rows
                    .iter()
                    .filter_map(|s| s.values.get(last))
                    .copied()
                    .fold(f64::MIN, f64::max);
                let lo = rows
                    .iter()
                    .filter_map(|s| s.values.get(last))
                    .copied()
                    .fold(f64::MAX, f64::min);
                ends.push((
                    py((hi + lo) / 2.0) + 4.0,
                    format!("band: {} others", rows.len()),
                    None,
                    "#6b6b6b",
                ));
            }
            for (rank, &s) in drawn.iter().enumerate() {
                let Some(series) = panel.series.get(s) else {
                    continue;
                };
                let st = style(rank);
                let pts = points(&series.values);
                let _ = writeln!(
                    out,
                    r#"<g class="series" data-series="{}"><polyline points="{}" fill="none" stroke="{}" stroke-width="2.2" stroke-linejoin="round"{}/>"#,
                    escape(&series.label),
                    polyline(&pts),
                    st.colour,
                    dash_attribute(st.dash)
                );
                for (j, &(x, y)) in pts.iter().enumerate() {
                    if (j + rank) % every == 0 || j + 1 == pts.len() {
                        out.push_str(&shape(st.shape, x, y, st.colour));
                    }
                }
                out.push_str("\n</g>\n");
                if let Some(&(_, y)) = pts.last() {
                    ends.push((y + 4.0, series.label.clone(), Some(rank), st.colour));
                }
            }
        } else {
            for series in &panel.series {
                let pts = points(&series.values);
                let _ = writeln!(
                    out,
                    r##"<g class="series" data-series="{}"><polyline points="{}" fill="none" stroke="#000000" stroke-width="2.2" stroke-linejoin="round"/></g>"##,
                    escape(&series.label),
                    polyline(&pts)
                );
                if let Some(&(_, y)) = pts.last() {
                    ends.push((y + 4.0, series.label.clone(), None, "#000000"));
                }
            }
        }
        let ys: Vec<f64> = ends.iter().map(|e| e.0).collect();
        for ((_, text, rank, colour), y) in ends.iter().zip(spread(&ys, top + 8.0, bottom + 4.0)) {
            let x = RIGHT + 8.0;
            if let Some(r) = rank {
                out.push_str(&shape(style(*r).shape, x + 4.0, y - 4.0, colour));
            }
            let _ = writeln!(
                out,
                r##"<text class="direct-label" x="{:.1}" y="{y:.1}" font-size="11" fill="#1a1a1a">{}</text>"##,
                x + 13.0,
                escape(&shorten(text, 26))
            );
        }
        for (m, marker) in chart.markers.iter().enumerate() {
            let x = px(marker.x);
            let _ = write!(
                out,
                r##"<g class="quota-marker" data-x="{}"><line x1="{x:.1}" y1="{top}" x2="{x:.1}" y2="{bottom}" stroke="#000000" stroke-width="1.4" stroke-dasharray="5 3"/><path d="M{x:.1},{bottom} l-5,9 h10 Z" fill="#000000"/>"##,
                marker.x
            );
            if k == 0 {
                let _ = write!(
                    out,
                    r#"<text x="{x:.1}" y="{:.1}" font-size="11" text-anchor="middle" font-weight="bold">{}</text>"#,
                    top - 6.0 - 13.0 * m as f64,
                    escape(&marker.label)
                );
            }
            out.push_str("</g>\n");
        }
        out.push_str("</g>\n");
    }
    legend(chart, &drawn, &folded, &mut out);
    out.push_str("</svg>\n");
    out
}

/// A point in SVG units.
type Point = (f64, f64);

/// The `points` attribute of a polyline or polygon.
fn polyline(points: &[Point]) -> String {
    points
        .iter()
        .map(|(x, y)| format!("{x:.1},{y:.1}"))
        .collect::<Vec<_>>()
        .join(" ")
}

/// Grid, ticks, the frame and the axis titles of one panel.
fn axes(
    out: &mut String,
    chart: &Chart,
    panel: &Panel,
    (top, bottom): (f64, f64),
    y_top: f64,
    x_ticks: &[f64],
    px: &dyn Fn(f64) -> f64,
) {
    for t in ticks(0.0, y_top) {
        let y = bottom - t / y_top * PANEL_HEIGHT;
        let _ = writeln!(
            out,
            r##"<line x1="{LEFT}" y1="{y:.1}" x2="{RIGHT}" y2="{y:.1}" stroke="#e3e3e3"/><text x="{:.1}" y="{:.1}" font-size="11" text-anchor="end">{}</text>"##,
            LEFT - 6.0,
            y + 4.0,
            number(t)
        );
    }
    for &t in x_ticks {
        let x = px(t);
        let _ = writeln!(
            out,
            r##"<line x1="{x:.1}" y1="{top}" x2="{x:.1}" y2="{bottom}" stroke="#e3e3e3"/><text x="{x:.1}" y="{:.1}" font-size="11" text-anchor="middle">{}</text>"##,
            bottom + 20.0,
            number(t)
        );
    }
    let _ = writeln!(
        out,
        r##"<path d="M{LEFT},{top} V{bottom} H{RIGHT}" fill="none" stroke="#333"/>"##
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
        bottom + 38.0,
        escape(&chart.x_label)
    );
}

/// The folded series: a grey band from their lowest to their highest value
/// at each x, with each drawn thin inside it.
fn band(out: &mut String, chart: &Chart, rows: &[&Series], points: &dyn Fn(&[f64]) -> Vec<Point>) {
    let n = chart.x.len();
    let edge = |pick: fn(f64, f64) -> f64, start: f64| -> Vec<f64> {
        (0..n)
            .map(|j| {
                rows.iter()
                    .filter_map(|s| s.values.get(j))
                    .copied()
                    .fold(start, pick)
            })
            .collect()
    };
    let upper = points(&edge(f64::max, f64::MIN));
    let mut lower = points(&edge(f64::min, f64::MAX));
    lower.reverse();
    let outline: Vec<Point> = upper.into_iter().chain(lower).collect();
    let _ = writeln!(
        out,
        r##"<g class="band" data-series-count="{}"><polygon points="{}" fill="#d4d4d4" fill-opacity="0.75" stroke="#9a9a9a" stroke-width="0.8"/>"##,
        rows.len(),
        polyline(&outline)
    );
    for s in rows {
        let _ = writeln!(
            out,
            r##"<g class="series folded" data-series="{}"><polyline points="{}" fill="none" stroke="#7a7a7a" stroke-width="0.7"/></g>"##,
            escape(&s.label),
            polyline(&points(&s.values))
        );
    }
    out.push_str("</g>\n");
}

fn legend(chart: &Chart, drawn: &[usize], folded: &[usize], out: &mut String) {
    let Some(panel) = chart.panels.iter().find(|p| p.shared) else {
        return;
    };
    let _ = writeln!(
        out,
        r#"<g class="legend"><text x="{LEGEND_X}" y="{}" font-size="12" font-weight="bold">Members (largest first)</text>"#,
        TOP + 4.0
    );
    let mut y = TOP + 24.0;
    for (rank, &s) in drawn.iter().enumerate() {
        let Some(series) = panel.series.get(s) else {
            continue;
        };
        let st = style(rank);
        let _ = writeln!(
            out,
            r#"<g class="legend-entry"><line x1="{LEGEND_X}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="{}" stroke-width="2.2"{}/>{}<text x="{:.1}" y="{y:.1}" font-size="12">{}</text></g>"#,
            y - 4.0,
            LEGEND_X + 30.0,
            y - 4.0,
            st.colour,
            dash_attribute(st.dash),
            shape(st.shape, LEGEND_X + 15.0, y - 4.0, st.colour),
            LEGEND_X + 38.0,
            escape(&shorten(&series.label, 34))
        );
        y += 18.0;
    }
    if !folded.is_empty() {
        let _ = writeln!(
            out,
            r##"<g class="legend-entry band"><rect x="{LEGEND_X}" y="{:.1}" width="30" height="10" fill="#d4d4d4" stroke="#9a9a9a"/><text x="{:.1}" y="{y:.1}" font-size="12">band: {} others</text><text x="{:.1}" y="{:.1}" font-size="10.5" fill="#333">(lowest to highest at each x)</text>"##,
            y - 10.0,
            LEGEND_X + 38.0,
            folded.len(),
            LEGEND_X + 38.0,
            y + 14.0
        );
        y += 30.0;
        let shown = folded.len().min(24);
        for &s in &folded[..shown] {
            if let Some(series) = panel.series.get(s) {
                let _ = writeln!(
                    out,
                    r##"<text class="band-member" x="{:.1}" y="{y:.1}" font-size="10.5" fill="#333">{}</text>"##,
                    LEGEND_X + 38.0,
                    escape(&shorten(&series.label, 36))
                );
                y += 14.0;
            }
        }
        if folded.len() > shown {
            let _ = writeln!(
                out,
                r##"<text x="{:.1}" y="{y:.1}" font-size="10.5" fill="#333">and {} more</text>"##,
                LEGEND_X + 38.0,
                folded.len() - shown
            );
        }
        out.push_str("</g>\n");
    }
    out.push_str("</g>\n");
}

fn range<'a>(x: impl Iterator<Item = &'a f64>) -> (f64, f64) {
    let (lo, hi) = x
        .copied()
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v), hi.max(v))
        });
    if !lo.is_finite() {
        return (0.0, 1.0);
    }
    if hi - lo < 1e-9 {
        return (lo - 0.5, hi + 0.5);
    }
    (lo, hi)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn chart(series: usize) -> Chart {
        let x: Vec<f64> = (50..=100).step_by(5).map(f64::from).collect();
        let lines = |scale: f64| -> Vec<Series> {
            (0..series)
                .map(|s| Series {
                    label: format!("m{s}"),
                    values: x
                        .iter()
                        .map(|v| scale * (s as f64 + 1.0) / (v + s as f64))
                        .collect(),
                })
                .collect()
        };
        Chart {
            title: "t".into(),
            note: "n".into(),
            x_label: "x".into(),
            panels: vec![
                Panel {
                    y_label: "a".into(),
                    series: lines(1.0),
                    shared: true,
                },
                Panel {
                    y_label: "b".into(),
                    series: lines(2.0),
                    shared: true,
                },
            ],
            x,
            markers: vec![Marker {
                x: 40.0,
                label: "quota".into(),
            }],
        }
    }

    #[test]
    fn few_series_are_all_drawn_and_many_fold_into_a_band() {
        assert_eq!(emphasised(&chart(7)), vec![6, 5, 4, 3, 2, 1, 0]);
        // Largest peak first; ties keep their order.
        assert_eq!(emphasised(&chart(30)), vec![29, 28, 27, 26, 25, 24]);
        let s = svg(&chart(30));
        assert_eq!(s.matches(r#"<g class="band" data-series-count="24">"#).count(), 2);
        assert_eq!(s.matches(r#"class="series folded""#).count(), 48);
        // Seven styles differ in colour and shape as well as dash.
        let styles: Vec<(&str, usize)> = (0..DRAWN).map(|k| (style(k).colour, style(k).shape)).collect();
        for (i, a) in styles.iter().enumerate() {
            for b in &styles[i + 1..] {
                assert!(a.0 != b.0 && a.1 != b.1);
            }
        }
    }

    #[test]
    fn markers_outside_the_points_widen_the_axis() {
        let s = svg(&chart(3));
        assert_eq!(s.matches(r#"class="quota-marker" data-x="40""#).count(), 2);
        // The marker at 40 is the left end of the plot: the axis starts at 40.
        assert!(s.contains(&format!(r#"data-x="40"><line x1="{LEFT:.1}""#)));
    }

    #[test]
    fn labels_are_spread_apart_within_the_panel() {
        let ys = spread(&[100.0, 101.0, 102.0, 300.0], 90.0, 305.0);
        assert_eq!(ys, vec![100.0, 113.0, 126.0, 300.0]);
        let ys = spread(&[300.0, 300.0], 90.0, 305.0);
        assert_eq!(ys, vec![292.0, 305.0]);
    }
}
