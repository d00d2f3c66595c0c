//! Pictures of the figures, written by hand as SVG and XHTML text (no
//! plotting dependency): the power report as bars beside the weights
//! ([`bars`]), the sweep as lines ([`lines`]), and one self-contained page
//! ([`page`]) for drafters who circulate results by e-mail. [`report`] turns
//! a [`crate::report::Report`] into the bar chart and the page, so the
//! command line, the WebAssembly package and any other front end draw the
//! same picture.
//!
//! Every string that comes from the input (titles, names, rule text) goes
//! through [`escape`], so a title such as `<b>&` cannot break the markup.
//! Output is well-formed XML: each SVG parses on its own and inside the page.
//!
//! Legibility without colour: series differ in pattern, dash and marker shape
//! as well as colour; colours are the eight of Okabe & Ito, "Color Universal
//! Design" (2008), chosen to stay apart for the common colour-vision
//! deficiencies. Every figure is also printed as text beside its mark.
//!
//! Time and output size: O(panels * rows) for bars, O(panels * series *
//! points) for lines; no input string is copied more than once per use.

pub mod bars;
pub mod lines;
pub mod page;
pub mod report;

/// The eight colours of Okabe & Ito (2008), black first.
pub const OKABE_ITO: [&str; 8] = [
    "#000000", "#e69f00", "#56b4e9", "#009e73", "#f0e442", "#0072b2", "#d55e00", "#cc79a7",
];

/// Text for XML content and attribute values: `& < > " '` replaced, and
/// characters XML 1.0 forbids (controls other than tab, line feed and
/// carriage return) dropped.
pub fn escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            '\t' | '\n' | '\r' => out.push(c),
            c if (c as u32) < 0x20 || c == '\u{fffe}' || c == '\u{ffff}' => {}
            c => out.push(c),
        }
    }
    out
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

/// A tick label: at most three decimals, no trailing zeros.
fn number(v: f64) -> String {
    let s = format!("{v:.3}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".to_string()
    } else {
        s.to_string()
    }
}

/// A share as a percentage with one decimal (two below 1%, so small
/// shares do not all read 0.0%).
fn percent(share: f64) -> String {
    let p = share * 100.0;
    if p != 0.0 && p.abs() < 1.0 {
        format!("{p:.2}%")
    } else {
        format!("{p:.1}%")
    }
}

/// At most `most` characters, with `…` when cut.
fn shorten(s: &str, most: usize) -> String {
    if s.chars().count() <= most {
        s.to_string()
    } else {
        let mut t: String = s.chars().take(most.saturating_sub(1)).collect();
        t.push('…');
        t
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_ceilings_and_labels() {
        assert_eq!(ticks(50.0, 100.0), vec![50.0, 60.0, 70.0, 80.0, 90.0, 100.0]);
        assert_eq!(nice_ceiling(0.37), 0.5);
        assert_eq!(nice_ceiling(0.2), 0.2);
        assert_eq!(nice_ceiling(0.0), 1.0);
        assert_eq!(number(0.25), "0.25");
        assert_eq!(number(60.0), "60");
        assert_eq!(percent(0.408337), "40.8%");
        assert_eq!(percent(0.014825), "1.5%");
        assert_eq!(percent(0.0048), "0.48%");
        assert_eq!(percent(0.0), "0.0%");
    }

    #[test]
    fn escape_covers_markup_and_controls() {
        assert_eq!(
            escape("a<b & \"c\" 'd'>"),
            "a&lt;b &amp; &quot;c&quot; &#39;d&#39;&gt;"
        );
        assert_eq!(escape("x\u{1}y\u{fffe}\tz"), "xy\tz");
        assert_eq!(escape("]]>"), "]]&gt;");
    }
}
