//! The report chart: for each member, or row of interchangeable members,
//! its share of one weight beside its normalized Banzhaf and Shapley-Shubik
//! shares of power, as three horizontal bars, one panel per weight
//! attribute.
//!
//! Rows are sorted by weight share, then by Banzhaf share (largest first);
//! beyond [`MAX_ROWS`] the smallest rows are summed into one last row, so a
//! body of thousands still gives a chart that fits a page. Every bar carries
//! its value as text; approximate figures carry their interval as a whisker
//! and as `±` text. The three bars differ in pattern (hatched, solid,
//! dotted) as well as colour, and veto, dummy and dictator members are
//! marked by words and symbols, so the chart reads in grey scale.
//!
//! Structure, for tools and tests: each panel is a `<g class="panel"
//! data-attribute="NAME">`, each row a `<g class="row" data-label="LABEL"
//! data-members="N">` (`class="row folded"` for the summed one), each bar a
//! `<rect class="bar weight|banzhaf|shapley-shubik" data-value="V">`, each
//! value a `<text class="value">`, each interval a `<g class="interval">`,
//! each mark a `<text class="flag">`. O(panels * rows) time and output.

use std::fmt::Write;

use super::{escape, nice_ceiling, number, percent, shorten, ticks, OKABE_ITO};

/// A share, exact or with the half-width of its interval.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Figure {
    /// The share (0 to 1).
    pub value: f64,
    /// Half-width of its confidence interval, for estimates.
    pub half_width: Option<f64>,
}

/// One member, or one row of interchangeable members (figures are each member's).
#[derive(Clone, Debug, PartialEq)]
pub struct Row {
    /// The members' names.
    pub label: String,
    /// How many members the row holds.
    pub members: usize,
    /// Each member's share of the panel's weight (0 to 1).
    pub weight: f64,
    /// Each member's normalized Banzhaf index.
    pub banzhaf: Figure,
    /// Each member's Shapley-Shubik index.
    pub shapley_shubik: Figure,
    /// Can block alone.
    pub veto: bool,
    /// Never a swing.
    pub dummy: bool,
    /// Decides alone.
    pub dictator: bool,
}

/// One weight attribute.
#[derive(Clone, Debug, PartialEq)]
pub struct Panel {
    /// The attribute's name.
    pub attribute: String,
    /// Its total, as text (`29`, `712,000`).
    pub total: String,
    /// The rows, in any order (the chart sorts them).
    pub rows: Vec<Row>,
}

/// A report chart.
#[derive(Clone, Debug, PartialEq)]
pub struct Chart {
    /// Prefix of the ids inside the SVG, unique within a page.
    pub id: String,
    /// The heading.
    pub title: String,
    /// The line under it (the rule's text).
    pub subtitle: String,
    /// Small print (the voting model; whether figures are estimates).
    pub note: String,
    /// One panel per weight attribute.
    pub panels: Vec<Panel>,
}

/// Most rows drawn per panel; the rest are summed into one.
pub const MAX_ROWS: usize = 30;

const WIDTH: f64 = 960.0;
const LABEL_END: f64 = 262.0;
const BAR_X: f64 = 272.0;
const BAR_WIDTH: f64 = 520.0;
const BAR: f64 = 10.0;
const ROW: f64 = 48.0;
const HEADER: f64 = 128.0;
const PANEL_HEAD: f64 = 46.0;
const PANEL_GAP: f64 = 26.0;
const BANZHAF_COLOUR: &str = OKABE_ITO[5];
const SHAPLEY_COLOUR: &str = OKABE_ITO[1];

/// The rows as drawn: sorted, and folded beyond [`MAX_ROWS`].
pub fn drawn_rows(panel: &Panel) -> Vec<(Row, bool)> {
    let mut rows = panel.rows.clone();
    rows.sort_by(|a, b| {
        b.weight
            .total_cmp(&a.weight)
            .then(b.banzhaf.value.total_cmp(&a.banzhaf.value))
            .then(b.shapley_shubik.value.total_cmp(&a.shapley_shubik.value))
    });
    if rows.len() <= MAX_ROWS {
        return rows.into_iter().map(|r| (r, false)).collect();
    }
    let rest = rows.split_off(MAX_ROWS - 1);
    let members: usize = rest.iter().map(|r| r.members).sum();
    let sum = |f: &dyn Fn(&Row) -> f64| rest.iter().map(|r| r.members as f64 * f(r)).sum::<f64>();
    let figure = |pick: fn(&Row) -> Figure| Figure {
        value: sum(&|r| pick(r).value),
        // Sums of interval ends bound the sum (a union bound on coverage).
        half_width: rest
            .iter()
            .any(|r| pick(r).half_width.is_some())
            .then(|| sum(&|r| pick(r).half_width.unwrap_or(0.0))),
    };
    let folded = Row {
        label: format!("the other {} rows together", rest.len()),
        members,
        weight: sum(&|r| r.weight),
        banzhaf: figure(|r| r.banzhaf),
        shapley_shubik: figure(|r| r.shapley_shubik),
        veto: false,
        dummy: rest.iter().all(|r| r.dummy),
        dictator: false,
    };
    rows.into_iter()
        .map(|r| (r, false))
        .chain([(folded, true)])
        .collect()
}

/// The chart as an SVG document.
pub fn svg(chart: &Chart) -> String {
    let drawn: Vec<Vec<(Row, bool)>> = chart.panels.iter().map(drawn_rows).collect();
    let height = HEADER
        + drawn
            .iter()
            .map(|rows| PANEL_HEAD + rows.len() as f64 * ROW + PANEL_GAP)
            .sum::<f64>();
    let id = escape(&chart.id);
    let mut out = String::new();
    let _ = writeln!(
        out,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH}" height="{height}" viewBox="0 0 {WIDTH} {height}" font-family="sans-serif">"#
    );
    let _ = writeln!(
        out,
        r##"<defs><pattern id="{id}-weight" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="6" height="6" fill="#d9d9d9"/><line x1="0" y1="0" x2="0" y2="6" stroke="#3a3a3a" stroke-width="2"/></pattern><pattern id="{id}-shapley" width="5" height="5" patternUnits="userSpaceOnUse"><rect width="5" height="5" fill="{SHAPLEY_COLOUR}"/><circle cx="2.5" cy="2.5" r="1.2" fill="#1a1a1a"/></pattern></defs>"##
    );
    let _ = writeln!(out, r#"<rect width="100%" height="100%" fill="white"/>"#);
    let _ = writeln!(
        out,
        r#"<text class="title" x="20" y="28" font-size="17" font-weight="bold">{}</text>"#,
        escape(&chart.title)
    );
    let _ = writeln!(
        out,
        r#"<text class="subtitle" x="20" y="48" font-size="12" font-family="monospace">{}</text>"#,
        escape(&chart.subtitle)
    );
    let _ = writeln!(
        out,
        r##"<text class="note" x="20" y="66" font-size="11" fill="#444">{}</text>"##,
        escape(&chart.note)
    );
    key(&mut out, &id);
    let mut top = HEADER;
    for (panel, rows) in chart.panels.iter().zip(&drawn) {
        draw_panel(&mut out, &id, panel, rows, top);
        top += PANEL_HEAD + rows.len() as f64 * ROW + PANEL_GAP;
    }
    out.push_str("</svg>\n");
    out
}

/// The key: what each bar and mark means.
fn key(out: &mut String, id: &str) {
    let y = 92.0;
    let _ = writeln!(out, r#"<g class="key" font-size="12">"#);
    let mut x = 20.0;
    for (fill, text) in [
        (format!("url(#{id}-weight)"), "share of the weight"),
        (BANZHAF_COLOUR.to_string(), "Banzhaf index (normalized)"),
        (format!("url(#{id}-shapley)"), "Shapley-Shubik index"),
    ] {
        let _ = writeln!(
            out,
            r##"<rect x="{x}" y="{:.1}" width="22" height="{BAR}" fill="{fill}" stroke="#1a1a1a" stroke-width="0.6"/><text x="{:.1}" y="{y}">{text}</text>"##,
            y - 9.0,
            x + 28.0
        );
        x += 36.0 + 7.0 * text.len() as f64;
    }
    let _ = writeln!(
        out,
        r##"<text x="20" y="{:.1}" font-size="11" fill="#333">▲ veto: can block alone;  ○ dummy: never a swing;  ★ dictator: decides alone;  × = members in the row; figures are each member's</text>"##,
        y + 18.0
    );
    out.push_str("</g>\n");
}

fn draw_panel(out: &mut String, id: &str, panel: &Panel, rows: &[(Row, bool)], top: f64) {
    let max = rows
        .iter()
        .flat_map(|(r, _)| {
            [
                r.weight,
                r.banzhaf.value + r.banzhaf.half_width.unwrap_or(0.0),
                r.shapley_shubik.value + r.shapley_shubik.half_width.unwrap_or(0.0),
            ]
        })
        .filter(|v| v.is_finite())
        .fold(0.0f64, f64::max);
    let scale = nice_ceiling(max).min(1.0);
    let px = |v: f64| BAR_X + v.clamp(0.0, scale) / scale * BAR_WIDTH;
    let bottom = top + PANEL_HEAD + rows.len() as f64 * ROW - 6.0;
    let _ = writeln!(
        out,
        r#"<g class="panel" data-attribute="{}">"#,
        escape(&panel.attribute)
    );
    let _ = writeln!(
        out,
        r#"<text class="panel-title" x="20" y="{:.1}" font-size="14" font-weight="bold">Weight: {} (total {})</text>"#,
        top + 16.0,
        escape(&panel.attribute),
        escape(&panel.total)
    );
    let axis = top + PANEL_HEAD - 8.0;
    for t in ticks(0.0, scale) {
        let x = px(t);
        let _ = writeln!(
            out,
            r##"<line x1="{x:.1}" y1="{axis:.1}" x2="{x:.1}" y2="{bottom:.1}" stroke="#e3e3e3"/><text x="{x:.1}" y="{:.1}" font-size="10.5" text-anchor="middle">{}%</text>"##,
            axis - 4.0,
            number(t * 100.0)
        );
    }
    let _ = writeln!(
        out,
        r##"<line x1="{BAR_X}" y1="{axis:.1}" x2="{BAR_X}" y2="{bottom:.1}" stroke="#333"/>"##
    );
    for (k, (row, folded)) in rows.iter().enumerate() {
        let y = top + PANEL_HEAD + k as f64 * ROW;
        draw_row(out, id, row, *folded, y, &px);
    }
    out.push_str("</g>\n");
}

fn draw_row(out: &mut String, id: &str, row: &Row, folded: bool, y: f64, px: &dyn Fn(f64) -> f64) {
    let _ = writeln!(
        out,
        r#"<g class="row{}" data-label="{}" data-members="{}">"#,
        if folded { " folded" } else { "" },
        escape(&row.label),
        row.members
    );
    let mut marks = Vec::new();
    if row.dictator {
        marks.push("★ dictator");
    }
    if row.veto {
        marks.push("▲ veto");
    }
    if row.dummy {
        marks.push(if folded { "○ all dummies" } else { "○ dummy" });
    }
    let _ = writeln!(
        out,
        r#"<text class="row-label" x="{LABEL_END}" y="{:.1}" font-size="12" text-anchor="end">{}</text>"#,
        y + 13.0,
        escape(&shorten(&row.label, 36))
    );
    let count = match (folded, row.members) {
        (true, n) => format!("{n} members; sums"),
        (false, 1) => String::new(),
        (false, n) => format!("×{n}, each"),
    };
    let second: Vec<String> = std::iter::once(count)
        .filter(|c| !c.is_empty())
        .chain(marks.iter().map(|m| m.to_string()))
        .collect();
    if !second.is_empty() {
        let _ = write!(
            out,
            r##"<text x="{LABEL_END}" y="{:.1}" font-size="11" text-anchor="end" fill="#333">"##,
            y + 28.0
        );
        for (i, part) in second.iter().enumerate() {
            let class = if i == 0 && !marks.contains(&part.as_str()) {
                "count"
            } else {
                "flag"
            };
            let sep = if i > 0 { "  " } else { "" };
            let weight = if class == "flag" {
                r#" font-weight="bold""#
            } else {
                ""
            };
            let _ = write!(
                out,
                r#"<tspan class="{class}"{weight}>{sep}{}</tspan>"#,
                escape(part)
            );
        }
        out.push_str("</text>\n");
    }
    let bars = [
        (
            "weight",
            format!("url(#{id}-weight)"),
            Figure {
                value: row.weight,
                half_width: None,
            },
        ),
        ("banzhaf", BANZHAF_COLOUR.to_string(), row.banzhaf),
        (
            "shapley-shubik",
            format!("url(#{id}-shapley)"),
            row.shapley_shubik,
        ),
    ];
    for (b, (class, fill, figure)) in bars.iter().enumerate() {
        let by = y + 2.0 + b as f64 * (BAR + 2.0);
        let end = px(figure.value);
        let _ = write!(
            out,
            r##"<rect class="bar {class}" data-value="{}" x="{BAR_X}" y="{by:.1}" width="{:.1}" height="{BAR}" fill="{fill}" stroke="#1a1a1a" stroke-width="0.5"/>"##,
            figure.value,
            (end - BAR_X).max(0.0)
        );
        let mut text_x = end;
        let mut text = percent(figure.value);
        if let Some(h) = figure.half_width {
            let (lo, hi) = (px(figure.value - h), px(figure.value + h));
            let mid = by + BAR / 2.0;
            let _ = write!(
                out,
                r##"<g class="interval" data-half-width="{h}"><path d="M{lo:.1},{mid:.1} H{hi:.1} M{lo:.1},{:.1} V{:.1} M{hi:.1},{:.1} V{:.1}" stroke="#000" stroke-width="1.2"/></g>"##,
                by - 1.0,
                by + BAR + 1.0,
                by - 1.0,
                by + BAR + 1.0
            );
            text_x = hi;
            text = format!("{text} ±{}", percent(h));
        }
        let _ = writeln!(
            out,
            r##"<text class="value" x="{:.1}" y="{:.1}" font-size="10" fill="#1a1a1a">{text}</text>"##,
            text_x + 4.0,
            by + BAR - 1.0
        );
    }
    out.push_str("</g>\n");
}

#[cfg(test)]
mod tests {
    use super::*;

    fn row(label: &str, members: usize, weight: f64, b: f64) -> Row {
        Row {
            label: label.into(),
            members,
            weight,
            banzhaf: Figure {
                value: b,
                half_width: None,
            },
            shapley_shubik: Figure {
                value: b,
                half_width: Some(0.01),
            },
            veto: false,
            dummy: b == 0.0,
            dictator: false,
        }
    }

    #[test]
    fn rows_are_sorted_and_the_smallest_summed() {
        let panel = Panel {
            attribute: "votes".into(),
            total: "100".into(),
            rows: (0..40)
                .map(|k| row(&format!("m{k}"), 2, k as f64 / 1000.0, 0.0))
                .collect(),
        };
        let rows = drawn_rows(&panel);
        assert_eq!(rows.len(), MAX_ROWS);
        assert_eq!(rows[0].0.label, "m39");
        let (last, folded) = &rows[MAX_ROWS - 1];
        assert!(folded);
        assert_eq!(last.label, "the other 11 rows together");
        assert_eq!(last.members, 22);
        // m0..m10, two members each: 2 * (0 + 1 + ... + 10) / 1000.
        assert!((last.weight - 0.11).abs() < 1e-12);
        assert!((last.shapley_shubik.half_width.unwrap() - 0.22).abs() < 1e-12);
        assert!(last.dummy);
    }

    #[test]
    fn marks_and_intervals_are_drawn() {
        let mut heavy = row("big", 1, 0.5, 0.7);
        heavy.veto = true;
        let chart = Chart {
            id: "c".into(),
            title: "<t>".into(),
            subtitle: "s".into(),
            note: "n".into(),
            panels: vec![Panel {
                attribute: "votes".into(),
                total: "10".into(),
                rows: vec![row("small", 3, 0.1, 0.0), heavy],
            }],
        };
        let s = svg(&chart);
        assert!(s.contains("&lt;t&gt;"));
        assert_eq!(s.matches(r#"class="interval""#).count(), 2);
        assert!(s.contains(r#"<tspan class="flag" font-weight="bold">▲ veto</tspan>"#));
        assert!(s.contains(r#"<tspan class="count">×3, each</tspan>"#));
        assert!(s.find(r#"data-label="big""#) < s.find(r#"data-label="small""#));
    }
}
