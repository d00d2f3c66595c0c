//! The pictures as a user makes them: `report --svg`, `report --html` and
//! `sweep --svg`, each parsed with an XML parser (roxmltree) and its
//! structure pinned against the report's own JSON figures; hostile input
//! escaped; and a screenshot of each kind rendered by headless Chromium.
//!
//! Screenshots: Debian's `chromium` (`apt-get install chromium`; `.ci/run`
//! installs it). Without it the screenshot test says so and passes, unless
//! `CLOUT_SCREENSHOTS=1` is set (as `.ci/run` does), which makes it required.
//! `CLOUT_BLESS=1` also writes the README's pictures under `docs/img/`.

mod cli_support;

use std::path::{Path, PathBuf};
use std::process::Command;

use cli_support::{clout_with_input, Run};
use roxmltree::{Document, Node};
use serde_json::Value;

const ROOT: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/..");

fn ok(args: &[&str]) -> String {
    let run: Run = clout_with_input(args, "");
    assert_eq!(run.code, 0, "clout {args:?}: {}", run.stderr);
    run.stdout
}

/// A fresh folder for one test's files (tests run in parallel: each call gets its own).
fn scratch(name: &str) -> PathBuf {
    static NEXT: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);
    let k = NEXT.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    let dir = std::env::temp_dir().join(format!("clout-pictures-{name}-{}-{k}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn read(path: &Path) -> String {
    std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// Runs `clout ARGS --svg FILE` and returns the SVG's text.
fn svg_of(args: &[&str]) -> String {
    let dir = scratch(args[0]);
    let path = dir.join("picture.svg");
    let mut all_args = args.to_vec();
    all_args.extend(["--svg", path.to_str().unwrap()]);
    ok(&all_args);
    let text = read(&path);
    std::fs::remove_dir_all(&dir).ok();
    text
}

fn class_is(n: &Node, class: &str) -> bool {
    n.attribute("class")
        .is_some_and(|c| c.split(' ').any(|x| x == class))
}

fn all<'a, 'i>(root: Node<'a, 'i>, class: &str) -> Vec<Node<'a, 'i>> {
    root.descendants().filter(|n| class_is(n, class)).collect()
}

fn text_of(n: Node) -> String {
    n.descendants()
        .filter(|d| d.is_text())
        .filter_map(|d| d.text())
        .collect()
}

/// Parses an SVG or the page (whose `<!DOCTYPE html>` is a DTD to the parser).
fn parse(text: &str) -> Result<Document<'_>, roxmltree::Error> {
    let options = roxmltree::ParsingOptions {
        allow_dtd: true,
        ..Default::default()
    };
    Document::parse_with_options(text, options)
}

/// Equal but for the last bits (serde_json reads floats to within an ulp or two).
fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-15 * a.abs().max(1.0)
}

fn number(n: &Node, attribute: &str) -> f64 {
    n.attribute(attribute).unwrap().parse().unwrap()
}

/// The report chart of transit's `budget` rule: a panel per declared weight
/// (seats, riders), a row per set of interchangeable members sorted by
/// weight, three bars per row whose values are the JSON report's figures.
#[test]
fn report_chart_matches_the_report() {
    let dir = scratch("report");
    let svg_path = dir.join("transit.svg");
    let out = ok(&[
        "report",
        "examples/transit.clout",
        "--svg",
        svg_path.to_str().unwrap(),
    ]);
    assert!(out.contains("Chart written to"), "{out}");
    let report: Value =
        serde_json::from_str(&ok(&["report", "examples/transit.clout", "--format", "json"])).unwrap();
    let text = read(&svg_path);
    let doc = parse(&text).expect("the SVG is well-formed XML");
    let root = doc.root_element();
    assert_eq!(root.tag_name().name(), "svg");
    assert_eq!(root.tag_name().namespace(), Some("http://www.w3.org/2000/svg"));
    let panels = all(doc.root(), "panel");
    let attributes: Vec<&str> = panels
        .iter()
        .map(|p| p.attribute("data-attribute").unwrap())
        .collect();
    assert_eq!(attributes, ["seats", "riders"]);
    let members = report["members"].as_array().unwrap();
    let by_name = |name: &str| members.iter().find(|m| m["name"] == name).unwrap();
    for (panel, totals) in panels.iter().zip([29.0, 712_000.0]) {
        let rows = all(*panel, "row");
        let labels: Vec<&str> = rows.iter().map(|r| r.attribute("data-label").unwrap()).collect();
        // Sorted by share of the weight; ferry (1 seat, 12,000 riders) and the
        // delegates (1 seat, no riders) differ in riders only.
        assert_eq!(labels, ["harbor", "mill", "ferry", "delegate1..delegate12"]);
        let counts: Vec<f64> = rows.iter().map(|r| number(r, "data-members")).collect();
        assert_eq!(counts, [1.0, 1.0, 1.0, 12.0]);
        for row in &rows {
            let first = match row.attribute("data-label").unwrap() {
                "delegate1..delegate12" => "delegate1",
                l => l,
            };
            let m = by_name(first);
            let bar = |kind: &str| number(&all(*row, kind)[0], "data-value");
            let weight_key = if totals == 29.0 { "seats" } else { "riders" };
            let weight: f64 = m["weights"][weight_key].as_str().unwrap().parse().unwrap();
            assert!((bar("weight") - weight / totals).abs() < 1e-12);
            assert!(close(bar("banzhaf"), m["banzhaf"].as_f64().unwrap()));
            assert!(close(
                bar("shapley-shubik"),
                m["shapley_shubik"].as_f64().unwrap()
            ));
            // Every bar carries its value as text.
            assert_eq!(all(*row, "value").len(), 3);
            assert!(
                all(*row, "interval").is_empty(),
                "exact figures have no intervals"
            );
        }
        let harbor_values: Vec<String> = all(rows[0], "value").into_iter().map(text_of).collect();
        assert_eq!(harbor_values[1], "40.8%");
        assert_eq!(harbor_values[2], "41.4%");
    }
    // The delegates' row says it stands for twelve members.
    assert!(text.contains("×12, each"));
    std::fs::remove_dir_all(&dir).ok();
}

/// Veto and dummy members are marked in words: in [6; 4, 2, 1] the members
/// of weight 4 and 2 are in every winning coalition ({4, 2} and {4, 2, 1}),
/// so both can block alone, and the member of weight 1 is never a swing
/// (by hand).
#[test]
fn report_chart_marks_vetoes_and_dummies() {
    let text = svg_of(&["report", "--game", "[6; 4, 2, 1]"]);
    let doc = parse(&text).unwrap();
    let rows = all(doc.root(), "row");
    let flags = |r: &Node| -> Vec<String> { all(*r, "flag").into_iter().map(text_of).collect() };
    assert_eq!(rows.len(), 3);
    assert_eq!(flags(&rows[0]), ["▲ veto"]);
    assert_eq!(flags(&rows[1]), ["▲ veto"]);
    assert_eq!(flags(&rows[2]), ["○ dummy"]);
    assert_eq!(number(&all(rows[2], "banzhaf")[0], "data-value"), 0.0);
}

/// Beyond 30 rows the smallest are summed into one: with weights 40, 39, ...,
/// 1 (total 820) the last row holds the 11 members of weight 11 down to 1,
/// whose shares and indices it adds up.
#[test]
fn report_chart_sums_the_smallest_rows_beyond_thirty() {
    let weights: Vec<String> = (1..=40).rev().map(|w| w.to_string()).collect();
    let game = format!("[500; {}]", weights.join(", "));
    let text = svg_of(&["report", "--game", &game]);
    let report: Value = serde_json::from_str(&ok(&["report", "--game", &game, "--format", "json"])).unwrap();
    let doc = parse(&text).unwrap();
    let rows = all(doc.root(), "row");
    assert_eq!(rows.len(), 30);
    let last = rows[29];
    assert!(class_is(&last, "folded"));
    assert_eq!(last.attribute("data-label"), Some("the other 11 rows together"));
    assert_eq!(last.attribute("data-members"), Some("11"));
    let members = report["members"].as_array().unwrap();
    let sum = |key: &str| {
        members[29..]
            .iter()
            .map(|m| m[key].as_f64().unwrap())
            .sum::<f64>()
    };
    let bar = |kind: &str| number(&all(last, kind)[0], "data-value");
    assert!((bar("weight") - 66.0 / 820.0).abs() < 1e-12);
    assert!((bar("banzhaf") - sum("banzhaf")).abs() < 1e-12);
    assert!((bar("shapley-shubik") - sum("shapley_shubik")).abs() < 1e-12);
}

/// An approximate report draws each estimate's interval and writes it.
#[test]
fn approximate_report_chart_shows_intervals() {
    let args = [
        "report",
        "examples/transit.clout",
        "--budget",
        "1",
        "--tolerance",
        "0.01",
    ];
    let text = svg_of(&args);
    let report: Value = serde_json::from_str(&ok(&[&args[..], &["--format", "json"]].concat())).unwrap();
    assert_eq!(report["approximate"], true);
    let doc = parse(&text).unwrap();
    assert!(text_of(all(doc.root(), "note")[0]).starts_with("ESTIMATES"));
    for panel in all(doc.root(), "panel") {
        for row in all(panel, "row") {
            // Banzhaf and Shapley-Shubik bars: one interval each.
            let intervals = all(row, "interval");
            assert_eq!(intervals.len(), 2);
            let label = row.attribute("data-label").unwrap();
            let first = if label.starts_with("delegate") {
                "delegate1"
            } else {
                label
            };
            let m = report["members"]
                .as_array()
                .unwrap()
                .iter()
                .find(|m| m["name"] == first)
                .unwrap();
            assert!(close(
                number(&intervals[0], "data-half-width"),
                m["banzhaf_half_width"].as_f64().unwrap()
            ));
            let values: Vec<String> = all(row, "value").into_iter().map(text_of).collect();
            assert!(values[1].contains(" ±") && values[2].contains(" ±"), "{values:?}");
        }
    }
}

/// Titles, names and rule text with markup are escaped: the SVG and the page
/// parse, and the parsed text is the input's.
#[test]
fn input_strings_are_escaped() {
    let dir = scratch("escape");
    let rule = dir.join("hostile.clout");
    let title = "A <b>bold</b> & 'title' ]]> <!-- x --> &amp;";
    std::fs::write(
        &rule,
        format!(
            "title \"{}\"\nmember \"<script>alert(1)</script>\" votes=3\nmember \"a&b\" votes=2\nmember c votes=1\nrule r = votes >= 4\n",
            title
        ),
    )
    .unwrap();
    let svg = dir.join("h.svg");
    let html = dir.join("h.html");
    let sweep = dir.join("s.svg");
    let r = rule.to_str().unwrap();
    ok(&[
        "report",
        r,
        "--svg",
        svg.to_str().unwrap(),
        "--html",
        html.to_str().unwrap(),
    ]);
    ok(&["sweep", r, "--svg", sweep.to_str().unwrap()]);
    for path in [&svg, &html, &sweep] {
        let text = read(path);
        assert!(!text.contains("<script"), "{}", path.display());
        assert!(!text.contains("<b>"), "{}", path.display());
        let doc = parse(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        let all_text: String = doc.descendants().filter_map(|n| n.text()).collect();
        assert!(all_text.contains(title), "{}: {all_text}", path.display());
        let names: Vec<&str> = doc
            .descendants()
            .filter_map(|n| n.attribute("data-label").or(n.attribute("data-series")))
            .collect();
        assert!(
            names.iter().any(|n| n.contains("<script>alert(1)</script>")),
            "{}: {names:?}",
            path.display()
        );
    }
    std::fs::remove_dir_all(&dir).ok();
}

/// The page: well-formed, self-contained (no scripts, no fetched resources),
/// with the rule text, the chart, the tables, the model and the caution.
#[test]
fn html_page_is_self_contained_and_complete() {
    let dir = scratch("html");
    let path = dir.join("transit.html");
    let out = ok(&[
        "report",
        "examples/transit.clout",
        "--rule",
        "closure",
        "--html",
        path.to_str().unwrap(),
    ]);
    assert!(out.contains("Page written to"), "{out}");
    let text = read(&path);
    assert!(text.starts_with("<!DOCTYPE html>"));
    let doc = parse(&text).expect("the page is well-formed XML (XHTML-compatible)");
    let html = doc.root_element();
    assert_eq!(html.tag_name().name(), "html");
    let tags = |name: &str| -> Vec<Node> {
        doc.descendants()
            .filter(|n| n.tag_name().name() == name)
            .collect()
    };
    for banned in [
        "script", "link", "img", "iframe", "object", "embed", "image", "use",
    ] {
        assert!(tags(banned).is_empty(), "the page has a <{banned}>");
    }
    for n in doc.descendants() {
        for a in n.attributes() {
            if matches!(a.name(), "href" | "src") {
                assert!(a.value().starts_with('#'), "{} = {}", a.name(), a.value());
            }
            // Only the patterns of the chart are referenced, by fragment.
            assert!(!a.value().contains("url(http"), "{}", a.value());
        }
    }
    assert!(!text.contains("@import") && !text.contains("@font-face"));
    let style = text_of(tags("style")[0]);
    assert!(!style.contains("url("), "{style}");
    // The rule text, the chart, the members and the properties.
    let pre: Vec<String> = tags("pre").into_iter().map(text_of).collect();
    assert_eq!(pre[0], "seats > 1/2 and founders");
    assert_eq!(tags("svg").len(), 1);
    let tables = tags("table");
    assert_eq!(tables.len(), 2);
    let cells: Vec<String> = tables[1]
        .descendants()
        .filter(|n| n.tag_name().name() == "td")
        .map(text_of)
        .collect();
    let value_of = |k: &str| cells[cells.iter().position(|c| c == k).unwrap() + 1].clone();
    // Under `closure` both founders (harbor and mill) can block alone.
    assert_eq!(value_of("veto members"), "harbor, mill");
    assert_eq!(value_of("members"), "15");
    let body = text_of(html);
    assert!(body.contains(clout::report::MODEL));
    assert!(body.contains(clout::report::CAUTION));
    // The text report is there too, whole.
    let report_text = ok(&["report", "examples/transit.clout", "--rule", "closure"]);
    assert!(pre.iter().any(|p| p == &report_text), "{pre:?}");
    std::fs::remove_dir_all(&dir).ok();
}

/// Thirty members of distinct weights (by hand: 30 different weights, so no
/// two members' figures coincide): six drawn alone and labelled at their
/// ends, 24 folded into a labelled band, and the rule's quota marked.
#[test]
fn sweep_chart_stays_legible_at_thirty_series() {
    let dir = scratch("sweep30");
    let path = dir.join("game.svg");
    let weights: Vec<String> = (1..=30).rev().map(|w| w.to_string()).collect();
    // Total 465; the quota 300 is 64.5% of it.
    let game = format!("[300; {}]", weights.join(", "));
    let out = ok(&[
        "sweep",
        "--game",
        &game,
        "--from",
        "50%",
        "--to",
        "90%",
        "--step",
        "10%",
        "--svg",
        path.to_str().unwrap(),
    ]);
    // The table's lines (headings and rows); the echo of the rule text and the
    // notes are prose.
    let table = out
        .lines()
        .filter(|l| l.starts_with("quota") || l.trim_start().starts_with(|c: char| c.is_ascii_digit()));
    for line in table {
        assert!(
            line.chars().count() <= 100,
            "{} characters: {line}",
            line.chars().count()
        );
    }
    assert!(out.contains("(columns 1-"), "{out}");
    let text = read(&path);
    let doc = parse(&text).unwrap();
    let series = |class: &str| -> Vec<String> {
        all(doc.root(), class)
            .iter()
            .filter(|n| class != "series" || !class_is(n, "folded"))
            .map(|n| n.attribute("data-series").unwrap().to_string())
            .collect()
    };
    // Two index panels: six drawn each, plus the probability of passage.
    let drawn = series("series");
    assert_eq!(drawn.len(), 13, "{drawn:?}");
    assert_eq!(&drawn[..6], ["p1", "p2", "p3", "p4", "p5", "p6"]);
    assert_eq!(series("folded").len(), 48);
    let bands: Vec<Node> = all(doc.root(), "band")
        .into_iter()
        .filter(|b| b.tag_name().name() == "g" && !class_is(b, "legend-entry"))
        .collect();
    assert_eq!(bands.len(), 2);
    assert!(bands
        .iter()
        .all(|b| b.attribute("data-series-count") == Some("24")));
    let direct: Vec<String> = all(doc.root(), "direct-label").into_iter().map(text_of).collect();
    assert_eq!(direct.iter().filter(|t| *t == "band: 24 others").count(), 2);
    assert_eq!(direct.iter().filter(|t| *t == "p1").count(), 2);
    let entries = all(doc.root(), "legend-entry");
    assert_eq!(entries.len(), 7);
    // The rule's own quota, 300 of 465, marked in all three panels.
    let marks = all(doc.root(), "quota-marker");
    assert_eq!(marks.len(), 3);
    for m in &marks {
        assert!((number(m, "data-x") - 300.0 / 465.0 * 100.0).abs() < 1e-9);
    }
    assert!(text_of(marks[0]).contains("the rule's quota: 64.5% (300)"));
    std::fs::remove_dir_all(&dir).ok();
}

fn chromium() -> Option<PathBuf> {
    let path = std::env::var_os("PATH")?;
    ["chromium", "chromium-browser"].iter().find_map(|name| {
        std::env::split_paths(&path)
            .map(|d| d.join(name))
            .find(|p| p.is_file())
    })
}

/// Renders `file` in headless Chromium at `width` x `height` into `png`.
fn screenshot(browser: &Path, file: &Path, png: &Path, (width, height): (u32, u32)) {
    let profile = png.with_extension("profile");
    let status = Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--hide-scrollbars",
            "--no-first-run",
            "--force-device-scale-factor=1",
            &format!("--user-data-dir={}", profile.display()),
            &format!("--window-size={width},{height}"),
            &format!("--screenshot={}", png.display()),
            &format!("file://{}", file.display()),
        ])
        .output()
        .expect("chromium runs");
    assert!(
        png.is_file(),
        "no screenshot: {}",
        String::from_utf8_lossy(&status.stderr)
    );
    let _ = std::fs::remove_dir_all(&profile);
}

/// Width, height and RGBA pixels of a PNG file.
fn pixels(png: &Path) -> (u32, u32, Vec<u8>) {
    let decoder = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(png).unwrap()));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).unwrap();
    let rgba: Vec<u8> = match info.color_type {
        png::ColorType::Rgba => buf[..info.buffer_size()].to_vec(),
        png::ColorType::Rgb => buf[..info.buffer_size()]
            .chunks(3)
            .flat_map(|p| [p[0], p[1], p[2], 255])
            .collect(),
        other => panic!("unexpected PNG colour type {other:?}"),
    };
    (info.width, info.height, rgba)
}

/// How many pixels are within 24 of `colour` in every channel.
fn count_colour(rgba: &[u8], colour: [u8; 3]) -> usize {
    rgba.chunks(4)
        .filter(|p| (0..3).all(|c| p[c].abs_diff(colour[c]) <= 24))
        .count()
}

/// Each kind of picture rendered by Chromium: the report chart, the page and
/// the sweep chart. Chromium draws the SVG (the Banzhaf bars' blue, the first
/// line's vermillion appear) rather than an error page.
#[test]
fn screenshots_in_headless_chromium() {
    let required = std::env::var_os("CLOUT_SCREENSHOTS").is_some_and(|v| v == "1");
    let Some(browser) = chromium() else {
        assert!(!required, "CLOUT_SCREENSHOTS=1 but no chromium on PATH");
        eprintln!("screenshots skipped: no chromium on PATH (apt-get install chromium)");
        return;
    };
    let bless = std::env::var_os("CLOUT_BLESS").is_some_and(|v| v == "1");
    let dir = scratch("screens");
    let report_svg = dir.join("report-transit.svg");
    let page = dir.join("page-transit.html");
    ok(&[
        "report",
        "examples/transit.clout",
        "--svg",
        report_svg.to_str().unwrap(),
        "--html",
        page.to_str().unwrap(),
    ]);
    let sweep_svg = dir.join("sweep-union-30.svg");
    // The README's sweep is the whole range by 2%; the test's a coarser one
    // of the same rule (debug builds count slowly).
    let step = if bless { "2%" } else { "10%" };
    ok(&[
        "sweep",
        "examples/union-30.clout",
        "--attr",
        "votes",
        "--from",
        "50%",
        "--to",
        "100%",
        "--step",
        step,
        "--svg",
        sweep_svg.to_str().unwrap(),
    ]);
    let svg_size = |path: &Path| -> (u32, u32) {
        let text = read(path);
        let doc = parse(&text).unwrap();
        let root = doc.root_element();
        (number(&root, "width") as u32, number(&root, "height") as u32)
    };
    let shots = [
        (report_svg.clone(), svg_size(&report_svg), [0x00, 0x72, 0xb2]),
        (page.clone(), (1000, 1400), [0x00, 0x72, 0xb2]),
        (sweep_svg.clone(), svg_size(&sweep_svg), [0xd5, 0x5e, 0x00]),
    ];
    for (file, size, colour) in shots {
        let png = file.with_extension("png");
        screenshot(&browser, &file, &png, size);
        let (w, h, rgba) = pixels(&png);
        assert_eq!((w, h), size, "{}", png.display());
        let ink = rgba
            .chunks(4)
            .filter(|p| p[0] < 200 || p[1] < 200 || p[2] < 200)
            .count();
        assert!(
            ink > (w * h / 50) as usize,
            "{}: almost blank ({ink} dark pixels)",
            png.display()
        );
        assert!(
            count_colour(&rgba, colour) > 500,
            "{}: the chart's colour is missing",
            png.display()
        );
        if bless {
            let name = png.file_name().unwrap();
            std::fs::copy(&png, Path::new(ROOT).join("docs/img").join(name)).unwrap();
        }
    }
    std::fs::remove_dir_all(&dir).ok();
}
