//! `clout sweep`: every member's Banzhaf and Shapley-Shubik index and the
//! probability of passage as the quota of the rule's conditions on one
//! attribute moves, as a text table, CSV, and an SVG chart. Members with
//! equal figures at every quota form one series; the text table is cut into
//! runs of columns that fit 100 characters. See `clout::toolkit::sweep` and
//! `clout::chart::lines`.

use std::fmt::Write;
use std::path::PathBuf;

use clap::{Args, ValueEnum};
use clout::chart::lines::{self, Chart, Marker, Panel, Series};
use clout::drafting::{self as answers, Sweep, SweepOptions, SweepPoint};
use clout::toolkit::sweep::Level;

use crate::drafting::{self, label, names};
use crate::input::Input;
use crate::progress::Progress;
use crate::report::{json, CAUTION, MODEL};
use crate::text::{Align, Table};
use crate::{parse_steps, Failure, Outcome, Source};

#[derive(Args)]
pub struct SweepArgs {
    #[command(flatten)]
    source: Source,
    /// The attribute whose conditions move together (default: the rule's only weighted attribute).
    #[arg(long, value_name = "NAME")]
    attr: Option<String>,
    /// Move only this condition: its number in the rule, 1 for the first (as `clout report` lists them).
    #[arg(long, value_name = "N")]
    condition: Option<usize>,
    /// Start of the range: a share such as 50% or an integer quota such as 58.
    #[arg(long, value_name = "QUOTA", default_value = "50%", value_parser = Level::parse)]
    from: Level,
    /// End of the range, in the same forms.
    #[arg(long, value_name = "QUOTA", default_value = "100%", value_parser = Level::parse)]
    to: Level,
    /// Step: a share such as 1% or an integer such as 2; repeated quotas are dropped.
    #[arg(long, value_name = "STEP", default_value = "1%", value_parser = Level::parse)]
    step: Level,
    /// Also write the chart as SVG to this file.
    #[arg(long, value_name = "PATH")]
    svg: Option<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = SweepFormat::Text)]
    format: SweepFormat,
    /// Most elementary steps the exact analysis of each point may take.
    #[arg(long, value_name = "STEPS", value_parser = parse_steps, default_value = "5e10")]
    budget: u128,
}

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum SweepFormat {
    Text,
    Csv,
    /// `clout::drafting::Sweep`, keys in the README.
    Json,
}

pub fn run(args: &SweepArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), false)?;
    let rule = input.rule(s.rule.as_deref())?;
    let options = SweepOptions {
        attribute: args.attr.clone(),
        condition: args.condition,
        from: args.from,
        to: args.to,
        step: args.step,
        budget: args.budget,
    };
    let answer = answers::sweep(&input.file, rule, &options, &mut Progress)?;
    let points = &answer.points;
    let total = answer.total;
    let attr_name = &answer.attribute;
    // One series per set of members whose figures agree at every point.
    let groups = clout::toolkit::profile::group_by_key(rule.rule.members(), |i| {
        points
            .iter()
            .flat_map(|p| {
                let m = &p.members[i];
                [m.banzhaf.to_bits(), m.shapley_shubik.to_bits()]
            })
            .collect::<Vec<u64>>()
    });
    let labels: Vec<String> = groups.iter().map(|g| label(&input.file, g)).collect();
    let share = |q: u64| q as f64 / total as f64 * 100.0;
    if let Some(path) = &args.svg {
        let moved: Vec<&str> = answer.conditions.iter().map(|c| c.text.as_str()).collect();
        // The rule's own quotas of the moved conditions, one mark each.
        let mut own: Vec<u64> = answer
            .conditions
            .iter()
            .filter_map(|c| rule.rule.atoms().get(c.number - 1))
            .map(|a| a.quota)
            .collect();
        own.sort_unstable();
        own.dedup();
        let c = Chart {
            title: format!("{}, rule `{}`: power as the quota of {attr_name} moves", input.title(), rule.name),
            note: format!(
                "Moving: {}. Each member votes yes or no independently with equal chance; figures are each member's.",
                moved.join("; ")
            ),
            x_label: format!("quota of {attr_name}, % of the total ({})", drafting::thousands(total)),
            x: points.iter().map(|p| share(p.quota)).collect(),
            panels: vec![
                panel("Banzhaf index (normalized)", &groups, &labels, points, |p, i| p.members[i].banzhaf),
                panel("Shapley-Shubik index", &groups, &labels, points, |p, i| p.members[i].shapley_shubik),
                Panel {
                    y_label: "Probability of passage".to_string(),
                    series: vec![Series {
                        label: "probability of passage".to_string(),
                        values: points.iter().map(|p| p.passage_probability).collect(),
                    }],
                    shared: false,
                },
            ],
            markers: own
                .iter()
                .map(|&q| Marker {
                    x: share(q),
                    label: format!("the rule's quota: {:.1}% ({})", share(q), drafting::thousands(q)),
                })
                .collect(),
        };
        crate::write_file(path, lines::svg(&c).as_bytes())?;
    }
    let out = match args.format {
        SweepFormat::Json => json(&answer),
        SweepFormat::Csv => csv(&groups, &input, &answer),
        SweepFormat::Text => {
            let mut out = drafting::heading("Sweep", &input, rule);
            let moved: Vec<String> = answer
                .conditions
                .iter()
                .map(|c| format!("condition {} `{}`", c.number, c.text))
                .collect();
            let _ = writeln!(
                out,
                "Moving {} (on {attr_name}, total {}) through {} quotas from {} to {}.\n\
                 Each row is the rule with that quota; members with equal figures at every quota\n\
                 share a column, and the figures are each member's.\n",
                moved.join(" and "),
                drafting::thousands(total),
                points.len(),
                drafting::thousands(points.first().map_or(0, |p| p.quota)),
                drafting::thousands(points.last().map_or(0, |p| p.quota))
            );
            for (title, pick) in [
                ("Banzhaf index (normalized)", 0usize),
                ("Shapley-Shubik index", 1),
            ] {
                let _ = writeln!(out, "{title}");
                let mut head = vec![
                    ("quota".to_string(), Align::Right),
                    ("share".to_string(), Align::Right),
                ];
                if pick == 0 {
                    head.push(("passage".to_string(), Align::Right));
                }
                head.extend(labels.iter().map(|l| (l.clone(), Align::Right)));
                let mut t = Table::new(head);
                for p in points {
                    let mut row = vec![drafting::thousands(p.quota), format!("{:.1}%", share(p.quota))];
                    if pick == 0 {
                        row.push(format!("{:.4}", p.passage_probability));
                    }
                    for g in &groups {
                        let m = &p.members[g[0]];
                        row.push(format!(
                            "{:.4}",
                            if pick == 0 { m.banzhaf } else { m.shapley_shubik }
                        ));
                    }
                    t.push(row);
                }
                out.push_str(&t.render_within(WIDTH, if pick == 0 { 3 } else { 2 }));
                out.push('\n');
            }
            if let Some(path) = &args.svg {
                let _ = writeln!(out, "Chart written to {}.", path.display());
            }
            let _ = writeln!(
                out,
                "passage = probability of passage (share of all ways to vote that pass).\n{MODEL}\n{CAUTION}"
            );
            out
        }
    };
    Ok(Outcome::ok(out))
}

/// Widest line of the text tables.
const WIDTH: usize = 100;

fn panel(
    title: &str,
    groups: &[Vec<usize>],
    labels: &[String],
    points: &[SweepPoint],
    value: impl Fn(&SweepPoint, usize) -> f64,
) -> Panel {
    Panel {
        y_label: title.to_string(),
        series: groups
            .iter()
            .zip(labels)
            .map(|(g, l)| Series {
                label: if g.len() > 1 {
                    format!("{l} (×{})", g.len())
                } else {
                    l.clone()
                },
                values: points.iter().map(|p| value(p, g[0])).collect(),
            })
            .collect(),
        shared: true,
    }
}

fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn csv(groups: &[Vec<usize>], input: &Input, answer: &Sweep) -> String {
    let mut out = String::from("quota,share,passage_probability");
    let full: Vec<String> = groups.iter().map(|g| names(&input.file, g)).collect();
    for kind in ["banzhaf", "shapley_shubik"] {
        for l in &full {
            out.push(',');
            out.push_str(&csv_field(&format!("{kind}:{l}")));
        }
    }
    out.push('\n');
    for p in &answer.points {
        let _ = write!(out, "{},{},{}", p.quota, p.share, p.passage_probability);
        for g in groups {
            let _ = write!(out, ",{}", p.members[g[0]].banzhaf);
        }
        for g in groups {
            let _ = write!(out, ",{}", p.members[g[0]].shapley_shubik);
        }
        out.push('\n');
    }
    out
}
