//! The power report as pictures: the bar chart of [`super::bars`] and the
//! page of [`super::page`], built from a [`Report`] and its rule, so every
//! front end draws the same figures. O(members * attributes).

use clout_dsl::{AttributeKind, CompiledRule, RuleFile};

use super::bars::{self, Figure, Row};
use super::page::{Block, Page, Table};
use crate::drafting::thousands;
use crate::report::{interchangeable, Report};

/// The rows of interchangeable members and their figures, with each
/// member's share of weight attribute `attribute` of the compiled rule
/// (`None`: of the head count).
fn rows(file: &RuleFile, rule: &CompiledRule, report: &Report, attribute: Option<usize>) -> Vec<Row> {
    let r = &rule.rule;
    let n = r.members().max(1) as f64;
    let total = attribute.map_or(0, |a| r.total(a));
    interchangeable(rule)
        .iter()
        .map(|ids| {
            let i = ids[0];
            let m = &report.members[i];
            Row {
                label: file.describe_members(ids).join(", "),
                members: ids.len(),
                weight: match attribute {
                    Some(a) if total > 0 => r.weight(a, i) as f64 / total as f64,
                    Some(_) => 0.0,
                    None => 1.0 / n,
                },
                banzhaf: Figure {
                    value: m.banzhaf,
                    half_width: m.banzhaf_half_width,
                },
                shapley_shubik: Figure {
                    value: m.shapley_shubik,
                    half_width: m.shapley_shubik_half_width,
                },
                veto: m.veto,
                dummy: m.dummy == Some(true),
                dictator: m.dictator,
            }
        })
        .collect()
}

/// The heading every picture of the report carries.
fn heading(report: &Report) -> String {
    match &report.title {
        Some(t) => format!("{t}: rule `{}`", report.rule),
        None => format!("rule `{}`", report.rule),
    }
}

/// The report chart: one panel per declared weight attribute (the head
/// count when the rule declares none), a row per set of interchangeable
/// members. `id` prefixes the SVG's ids.
pub fn chart(file: &RuleFile, rule: &CompiledRule, report: &Report, id: &str) -> bars::Chart {
    let r = &rule.rule;
    let declared: Vec<usize> = (0..r.attributes())
        .filter(|&a| rule.attributes[a].kind == AttributeKind::Declared)
        .collect();
    let panels = if declared.is_empty() {
        vec![bars::Panel {
            attribute: "head count".to_string(),
            total: thousands(r.members()),
            rows: rows(file, rule, report, None),
        }]
    } else {
        declared
            .iter()
            .map(|&a| bars::Panel {
                attribute: rule.attributes[a].name.clone(),
                total: thousands(r.total(a)),
                rows: rows(file, rule, report, Some(a)),
            })
            .collect()
    };
    let note = match report.confidence {
        Some(c) if report.approximate => format!(
            "ESTIMATES: each bar is an estimate, its whisker the {}% interval. {}",
            c * 100.0,
            report.model
        ),
        _ => report.model.clone(),
    };
    bars::Chart {
        id: id.to_string(),
        title: format!("{}: power beside weight", heading(report)),
        subtitle: report.text.clone(),
        note,
        panels,
    }
}

fn figure(value: f64, half_width: Option<f64>) -> String {
    match half_width {
        Some(h) => format!("{value:.6} ±{h:.1e}"),
        None => format!("{value:.6}"),
    }
}

/// The members table: one row per set of interchangeable members.
fn members_table(file: &RuleFile, rule: &CompiledRule, report: &Report) -> Table {
    let attributes = &file.attributes;
    let mut head = vec!["member".to_string(), "×".to_string()];
    head.extend(attributes.iter().cloned());
    head.extend(
        ["swings", "banzhaf", "penrose", "shapley-shubik", "flags"]
            .iter()
            .map(|h| h.to_string()),
    );
    let mut numeric = vec![false, true];
    numeric.extend(attributes.iter().map(|_| true));
    numeric.extend([true, true, true, true, false]);
    let rows = interchangeable(rule)
        .iter()
        .map(|ids| {
            let i = ids[0];
            let m = &report.members[i];
            let mut row = vec![file.describe_members(ids).join(", "), ids.len().to_string()];
            row.extend((0..attributes.len()).map(|a| thousands(file.weight(a, i))));
            row.push(m.swings.as_deref().map(thousands).unwrap_or_default());
            row.push(figure(m.banzhaf, m.banzhaf_half_width));
            row.push(figure(m.penrose, m.penrose_half_width));
            row.push(figure(m.shapley_shubik, m.shapley_shubik_half_width));
            let flags: Vec<&str> = [
                (m.dictator, "dictator"),
                (m.veto, "veto"),
                (m.dummy == Some(true), "dummy"),
            ]
            .iter()
            .filter(|(on, _)| *on)
            .map(|(_, f)| *f)
            .collect();
            row.push(flags.join(" "));
            row
        })
        .collect();
    Table { head, numeric, rows }
}

/// The rule's properties, one per row (those the method computed).
fn summary_table(file: &RuleFile, report: &Report) -> Table {
    let mut rows: Vec<Vec<String>> = Vec::new();
    let mut line = |k: &str, v: String| rows.push(vec![k.to_string(), v]);
    for c in &report.conditions {
        line(
            "condition",
            format!(
                "{}  means  {} >= {} of {}",
                c.text,
                c.attribute,
                thousands(&c.quota),
                thousands(&c.total)
            ),
        );
    }
    line("members", thousands(report.members.len()));
    if let Some(w) = &report.winning_coalitions {
        line("winning coalitions", thousands(w));
    }
    if let Some(p) = report.passage_probability {
        line("probability of passage", format!("{p:.6}"));
    }
    let yes_no = |b: bool| if b { "yes" } else { "no" }.to_string();
    for (k, v) in [
        ("proper", report.proper),
        ("strong", report.strong),
        ("decisive", report.decisive),
    ] {
        if let Some(v) = v {
            line(k, yes_no(v));
        }
    }
    let named = |pick: &dyn Fn(usize) -> bool| {
        let ids: Vec<usize> = (0..report.members.len()).filter(|&i| pick(i)).collect();
        if ids.is_empty() {
            "none".to_string()
        } else {
            file.describe_members(&ids).join(", ")
        }
    };
    if report.members.iter().all(|m| m.dummy.is_some()) {
        line("dummies", named(&|i| report.members[i].dummy == Some(true)));
    }
    line("veto members", named(&|i| report.members[i].veto));
    if let Some(k) = report.smallest_winning_coalition {
        line("smallest winning coalition", format!("{} members", thousands(k)));
    }
    if let Some(m) = &report.minimal_winning_coalitions {
        line("minimal winning coalitions", thousands(m));
    }
    line("engine", report.engine.clone());
    Table {
        head: vec!["property".to_string(), "value".to_string()],
        numeric: vec![false, false],
        rows,
    }
}

/// The report as one self-contained page: rule text, the approximation
/// notice when there is one, the chart, the members and the rule's
/// properties, the model and the caution. Front ends may append blocks
/// (the command line appends its text report) before writing it with
/// [`super::page::xhtml`].
pub fn page(file: &RuleFile, rule: &CompiledRule, report: &Report) -> Page {
    let mut blocks = vec![
        Block::Heading("The rule".to_string()),
        Block::Code(report.text.clone()),
    ];
    if report.approximate {
        blocks.push(Block::Notice(format!(
            "APPROXIMATE: no exact engine fits ({}). Every figure is an estimate with the half-width of its {}% interval.",
            report.reason.as_deref().unwrap_or_default(),
            report.confidence.unwrap_or_default() * 100.0
        )));
    }
    let svg = bars::svg(&chart(file, rule, report, "report"));
    blocks.extend([
        Block::Heading("Power beside weight".to_string()),
        Block::Figure {
            svg,
            caption: "Each member's share of each weight beside its normalized Banzhaf and Shapley-Shubik \
                      shares of power; members with identical weights share a row."
                .to_string(),
        },
        Block::Heading("Members".to_string()),
        Block::Table(members_table(file, rule, report)),
        Block::Paragraph(
            "× = members in the row; the figures are each member's. swings = raw Banzhaf count; \
             penrose = swings / 2^(n-1)."
                .to_string(),
        ),
        Block::Heading("The rule's properties".to_string()),
        Block::Table(summary_table(file, report)),
        Block::Heading("Model and caution".to_string()),
        Block::Paragraph(report.model.clone()),
        Block::Notice(report.caution.clone()),
    ]);
    Page {
        title: heading(report),
        blocks,
    }
}
