//! Pass 1, names and declarations: every member, group, bloc, attribute,
//! definition and rule gets its name in one namespace, duplicates refused;
//! members get their weights; a group makes its members NAME1..NAMEK.
//!
//! Blocs are only named here (pass 2 resolves them) and definitions and
//! rules only registered (pass 3 resolves them). Names set aside by the
//! parser ([`SetAside`]) are not declared, and [`Namespace::unknown`] stays
//! quiet about them.
//!
//! Time O(source + members * attributes): one hash look-up per name, line
//! numbers from [`LineStarts`] in O(log lines); a group's size is checked
//! against the member limit before its members are made.

use std::collections::HashMap;

use clout_core::limits::{MAX_ATTRIBUTES, MAX_MEMBERS};

use super::file::{Bloc, Group, Member};
use super::too_many_members;
use super::Tables;
use crate::amount;
use crate::data::{At, Table};
use crate::diagnostic::{closest, CappedErrors, Diagnostic, LineStarts, Span};
use crate::quote::written;
use crate::syntax::{
    self, AttributeDecl, BlocDecl, Declaration, GroupDecl, MemberDecl, NamedExpr, Quantity, SetAside,
    TableDecl, MAX_NAME_LEN,
};

/// What a name stands for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Kind {
    Member(usize),
    /// A bloc or a group (a group is also a bloc, named like it).
    Bloc(usize),
    Attribute(usize),
    /// A definition or a rule, an index into [`Declared::named`].
    Named(usize),
}

/// A definition or rule.
pub(super) struct NamedDecl<'a> {
    pub decl: &'a NamedExpr,
    pub is_rule: bool,
}

/// Every declared name, what it stands for and where it is declared.
pub(super) struct Namespace {
    entries: HashMap<String, (Kind, Span)>,
    /// Per bloc: whether it is a group.
    bloc_is_group: Vec<bool>,
    /// Per definition or rule: whether it is a rule.
    named_is_rule: Vec<bool>,
    lines: LineStarts,
    /// What the parser set aside.
    pub set_aside: SetAside,
}

impl Namespace {
    fn new(source: &str, set_aside: SetAside) -> Self {
        Namespace {
            entries: HashMap::new(),
            bloc_is_group: Vec::new(),
            named_is_rule: Vec::new(),
            lines: LineStarts::new(source),
            set_aside,
        }
    }

    /// What `name` stands for.
    pub fn get(&self, name: &str) -> Option<Kind> {
        self.entries.get(name).map(|e| e.0)
    }

    /// The line a span starts on.
    pub fn line(&self, span: Span) -> usize {
        self.lines.line(span.start)
    }

    /// "a member", "a group", ...: for messages.
    pub fn word(&self, kind: Kind) -> &'static str {
        match kind {
            Kind::Member(_) => "a member",
            Kind::Bloc(b) if self.bloc_is_group.get(b) == Some(&true) => "a group",
            Kind::Bloc(_) => "a bloc",
            Kind::Attribute(_) => "an attribute",
            Kind::Named(k) if self.named_is_rule.get(k) == Some(&true) => "a rule",
            Kind::Named(_) => "a definition",
        }
    }

    /// Registers a name; reports an over-long name or a duplicate and returns false.
    fn claim(&mut self, name: &str, span: Span, kind: Kind, errors: &mut CappedErrors) -> bool {
        if name.len() > MAX_NAME_LEN {
            errors.push(
                Diagnostic::error(
                    span,
                    format!("a name of {} bytes, over the limit of {MAX_NAME_LEN}", name.len()),
                )
                .with_hint("use a shorter name; a title can hold the long form"),
            );
            return false;
        }
        if let Some(&(old, old_span)) = self.entries.get(name) {
            let hint = format!(
                "`{name}` is already {} (line {}); members, groups, blocs, attributes, definitions and rules need distinct names",
                self.word(old),
                self.line(old_span)
            );
            errors.push(Diagnostic::error(span, format!("duplicate name `{name}`")).with_hint(hint));
            return false;
        }
        self.entries.insert(name.to_string(), (kind, span));
        true
    }

    /// "did you mean ...?" for `word` among the names whose kind `fits`.
    pub fn suggestion(
        &self,
        word: &str,
        fits: impl Fn(Kind) -> bool,
        errors: &CappedErrors,
    ) -> Option<String> {
        // Past the diagnostics that are shown, skip the search (it compares every name).
        if errors.is_full() {
            return None;
        }
        let mut candidates: Vec<&str> = self
            .entries
            .iter()
            .filter(|(_, (k, _))| fits(*k))
            .map(|(n, _)| n.as_str())
            .collect();
        candidates.sort_unstable();
        closest(word, candidates).map(|c| format!("did you mean `{c}`?"))
    }

    /// Reports an unknown name, with a suggestion or `otherwise` as the
    /// hint; quiet when a set-aside declaration mentions the name.
    pub fn unknown(
        &self,
        name: &syntax::Name,
        what: &str,
        fits: impl Fn(Kind) -> bool,
        otherwise: &str,
        errors: &mut CappedErrors,
    ) {
        if self.set_aside.covers(&name.text) {
            return;
        }
        let hint = self
            .suggestion(&name.text, fits, errors)
            .unwrap_or_else(|| otherwise.to_string());
        errors.push(Diagnostic::error(name.span, format!("unknown {what} `{}`", name.text)).with_hint(hint));
    }

    /// Declared attribute names, sorted (for hints).
    pub fn sorted_attributes<'n>(&self, attributes: &'n [(String, Span)]) -> Vec<&'n str> {
        let mut known: Vec<&str> = attributes.iter().map(|(a, _)| a.as_str()).collect();
        known.sort_unstable();
        known
    }
}

/// What pass 1 declares; pass 2 fills in the blocs' members.
pub(super) struct Declared<'a> {
    pub source: &'a str,
    pub names: Namespace,
    pub title: Option<(String, Span)>,
    /// Members in declaration order.
    pub members: Vec<Member>,
    /// Each member's weights as (attribute, exact amount in base units).
    pub member_weights: Vec<Vec<(usize, u128)>>,
    /// Per declared attribute: its `attribute` declaration, if any.
    pub amounts: Vec<Option<AmountSpec>>,
    /// Per declared attribute: the unit (in base units) its weights are
    /// rounded to, when the exact amounts are too large for the core.
    pub scaled: Vec<Option<u128>>,
    pub groups: Vec<Group>,
    /// Blocs and groups; a bloc's members are empty until pass 2.
    pub blocs: Vec<Bloc>,
    /// The declaration of each bloc still to resolve (`None` for a group).
    pub bloc_decls: Vec<Option<&'a BlocDecl>>,
    /// Blocs whose members are not all known (a part was set aside).
    pub uncertain_blocs: Vec<bool>,
    /// Declared attributes in order of first use, with that place.
    pub attributes: Vec<(String, Span)>,
    /// Definitions and rules in declaration order.
    pub named: Vec<NamedDecl<'a>>,
}

/// `attribute NAME decimals D [unit U]`, resolved.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) struct AmountSpec {
    pub decimals: u32,
    /// The declared unit in base units (at least 1).
    pub unit: Option<u128>,
    pub span: Span,
}

/// Declares every name of `declarations`; tables come from `tables`.
pub(super) fn declare<'a>(
    source: &'a str,
    declarations: &'a [Declaration],
    set_aside: SetAside,
    tables: &mut dyn Tables,
    errors: &mut CappedErrors,
) -> Declared<'a> {
    let mut d = Declared {
        source,
        names: Namespace::new(source, set_aside),
        title: None,
        members: Vec::new(),
        member_weights: Vec::new(),
        amounts: Vec::new(),
        scaled: Vec::new(),
        groups: Vec::new(),
        blocs: Vec::new(),
        bloc_decls: Vec::new(),
        uncertain_blocs: Vec::new(),
        attributes: Vec::new(),
        named: Vec::new(),
    };
    // Decimals first: member lines and tables before them read amounts with them.
    for declaration in declarations {
        if let Declaration::Attribute(a) = declaration {
            d.declare_amounts(a, errors);
        }
    }
    for declaration in declarations {
        if let Declaration::Table(t) = declaration {
            d.declare_table(t, tables, errors);
        } else {
            d.declare(declaration, errors);
        }
    }
    d.scale(errors);
    // Attributes share the namespace: an attribute may not also be declared as something else.
    for a in 0..d.attributes.len() {
        let (name, span) = d.attributes[a].clone();
        d.names.claim(&name, span, Kind::Attribute(a), errors);
    }
    // A set-aside declaration may be the missing member or rule: say nothing then.
    if d.names.set_aside.is_empty() {
        let last = syntax::end_of_content(source, source.len());
        let end = Span::new(last, last);
        let any_member = declarations.iter().any(|d| {
            matches!(
                d,
                Declaration::Member(_) | Declaration::Group(_) | Declaration::Table(_)
            )
        });
        if !any_member {
            errors.push(
                Diagnostic::error(end, "the file declares no members")
                    .with_hint("declare members with `member NAME attr=N` or `members NAME xK attr=N`"),
            );
        }
        if !d.named.iter().any(|n| n.is_rule) {
            errors.push(
                Diagnostic::error(end, "the file declares no rule")
                    .with_hint("add a rule such as `rule passage = count > 1/2`"),
            );
        }
    }
    d
}

impl<'a> Declared<'a> {
    fn declare(&mut self, declaration: &'a Declaration, errors: &mut CappedErrors) {
        match declaration {
            Declaration::Title { text, span } => {
                if let Some((_, first)) = &self.title {
                    let hint = format!("the first title is on line {}", self.names.line(*first));
                    errors.push(Diagnostic::error(*span, "a second title").with_hint(hint));
                } else {
                    self.title = Some((text.clone(), *span));
                }
            }
            Declaration::Member(m) => self.declare_member(m, errors),
            Declaration::Group(g) => self.declare_group(g, errors),
            // Declared before and after the others (see `declare`).
            Declaration::Attribute(_) | Declaration::Table(_) => {}
            Declaration::Bloc(b) => {
                let index = self.blocs.len();
                if self
                    .names
                    .claim(&b.name.text, b.name.span, Kind::Bloc(index), errors)
                {
                    self.push_bloc(&b.name, Some(b), Vec::new());
                }
            }
            Declaration::Define(n) | Declaration::Rule(n) => {
                let index = self.named.len();
                if self
                    .names
                    .claim(&n.name.text, n.name.span, Kind::Named(index), errors)
                {
                    let is_rule = matches!(declaration, Declaration::Rule(_));
                    self.named.push(NamedDecl { decl: n, is_rule });
                    self.names.named_is_rule.push(is_rule);
                }
            }
        }
    }

    fn push_bloc(&mut self, name: &syntax::Name, decl: Option<&'a BlocDecl>, members: Vec<usize>) {
        self.blocs.push(Bloc {
            name: name.text.clone(),
            span: name.span,
            members,
        });
        self.bloc_decls.push(decl);
        self.uncertain_blocs.push(false);
        self.names.bloc_is_group.push(decl.is_none());
    }

    fn weights_of(&mut self, weights: &[syntax::Weight], errors: &mut CappedErrors) -> Vec<(usize, u128)> {
        let mut out: Vec<(usize, u128)> = Vec::new();
        for w in weights {
            let Some(a) = self.attribute(&w.attribute, errors) else {
                continue;
            };
            let Some(value) = self.quantity(a, &w.value, errors) else {
                continue;
            };
            // At most MAX_ATTRIBUTES entries: a linear scan.
            if out.iter().any(|&(b, _)| b == a) {
                errors.push(
                    Diagnostic::error(w.span, format!("`{}` is given twice", w.attribute.text))
                        .with_hint("give each attribute once per member"),
                );
                continue;
            }
            out.push((a, value));
        }
        out
    }

    /// Decimals declared for attribute `a` (0 without a declaration).
    pub fn decimals(&self, a: usize) -> u32 {
        self.amounts.get(a).copied().flatten().map_or(0, |s| s.decimals)
    }

    /// A weight from rule text in base units of attribute `a`; without
    /// declared decimals a whole number below 2^64.
    fn quantity(&mut self, a: usize, q: &Quantity, errors: &mut CappedErrors) -> Option<u128> {
        let decimals = self.decimals(a);
        let name = self.attributes[a].0.clone();
        let value = amount::from_quantity(q.mantissa, q.scale, decimals);
        match value {
            Ok(v) if decimals == 0 && v > u128::from(u64::MAX) => {
                let written = q.span.text(self.source);
                errors.push(
                    Diagnostic::error(q.span, format!("the number {written} is too large"))
                        .with_hint("numbers are at most 18_446_744_073_709_551_615 (2^64 - 1); declare decimals for larger exact amounts (`attribute NAME decimals D`)"),
                );
                None
            }
            Ok(v) => Some(v),
            Err(e) => {
                let (message, hint) = e.describe(q.span.text(self.source), &name);
                errors.push(Diagnostic::error(q.span, message).with_hint(hint));
                None
            }
        }
    }

    /// `attribute NAME decimals D [unit U]`.
    fn declare_amounts(&mut self, decl: &AttributeDecl, errors: &mut CappedErrors) {
        let Some(a) = self.attribute(&decl.name, errors) else {
            return;
        };
        if self.amounts.get(a).copied().flatten().is_some() {
            errors.push(
                Diagnostic::error(decl.name.span, format!("`{}` is declared twice", decl.name.text))
                    .with_hint("declare an attribute's decimals once"),
            );
            return;
        }
        let (decimals, decimals_span) = decl.decimals;
        if decimals > u64::from(amount::MAX_DECIMALS) {
            errors.push(
                Diagnostic::error(
                    decimals_span,
                    format!("{decimals} decimals, more than {}", amount::MAX_DECIMALS),
                )
                .with_hint(format!("amounts have at most {} decimals", amount::MAX_DECIMALS)),
            );
            return;
        }
        let decimals = decimals as u32;
        let unit = match decl.unit {
            None => None,
            Some(q) => match amount::from_quantity(q.mantissa, q.scale, decimals) {
                Ok(0) => {
                    errors.push(
                        Diagnostic::error(q.span, "a unit of 0")
                            .with_hint("the unit is a positive amount, e.g. `unit 0.001`"),
                    );
                    return;
                }
                Ok(u) => Some(u),
                Err(e) => {
                    let (message, hint) = e.describe(q.span.text(self.source), &decl.name.text);
                    errors.push(Diagnostic::error(q.span, format!("the unit: {message}")).with_hint(hint));
                    return;
                }
            },
        };
        if self.amounts.len() <= a {
            self.amounts.resize(a + 1, None);
        }
        self.amounts[a] = Some(AmountSpec {
            decimals,
            unit,
            span: decl.span,
        });
    }

    /// `members NAME from "FILE" name=COLUMN attr=COLUMN ...`: one member
    /// per row, named by the name column (default: the first).
    fn declare_table(&mut self, decl: &TableDecl, tables: &mut dyn Tables, errors: &mut CappedErrors) {
        let attributes: Vec<Option<usize>> = decl
            .columns
            .iter()
            .map(|(attribute, _)| self.attribute(attribute, errors))
            .collect();
        let bloc = self.blocs.len();
        if !self
            .names
            .claim(&decl.name.text, decl.name.span, Kind::Bloc(bloc), errors)
        {
            return;
        }
        let first = self.members.len();
        self.push_bloc(&decl.name, None, Vec::new());
        let (path, path_span) = &decl.path;
        let table = match tables.table(path) {
            Ok((name, bytes)) => Table::read(&name, &bytes),
            Err(why) => {
                errors.push(
                    Diagnostic::error(*path_span, format!("cannot read the table `{path}`: {why}"))
                        .with_hint("tables are CSV or JSON files named relative to the rule file"),
                );
                return;
            }
        };
        let table = match table {
            Ok(t) => t,
            Err(e) => {
                errors.push(e);
                return;
            }
        };
        let line = self.names.line(decl.span);
        let find = |column: &syntax::Name, errors: &mut CappedErrors| -> Option<usize> {
            if let Some(c) = table.column(&column.text) {
                return Some(c);
            }
            let hint = match closest(&column.text, table.columns.iter().map(String::as_str)) {
                Some(c) => format!(
                    "did you mean `{c}`? (the rule file names `{}` on line {line})",
                    column.text
                ),
                None => format!(
                    "the columns are: {}; the rule file names `{}` on line {line}",
                    table.columns.join(", "),
                    column.text
                ),
            };
            errors.push(table.error(
                At::Start,
                format!("the header has no column `{}`", column.text),
                hint,
            ));
            None
        };
        let name_column = match &decl.name_column {
            Some(c) => find(c, errors),
            None => Some(0),
        };
        let columns: Vec<Option<usize>> = decl.columns.iter().map(|(_, c)| find(c, errors)).collect();
        let Some(name_column) = name_column else {
            return;
        };
        if columns.iter().any(Option::is_none) || attributes.iter().any(Option::is_none) {
            return;
        }
        if table.rows.is_empty() {
            errors.push(table.error(
                At::Start,
                "the table has no rows".to_string(),
                "a member table lists one member per row, after the header",
            ));
            return;
        }
        let mut first_row: HashMap<&str, usize> = HashMap::new();
        for (r, row) in table.rows.iter().enumerate() {
            if self.members.len() >= MAX_MEMBERS {
                errors.push(table.error(
                    At::Row(r),
                    format!("more than {MAX_MEMBERS} members"),
                    format!(
                        "a rule holds at most {MAX_MEMBERS} members; this table has {} rows",
                        table.rows.len()
                    ),
                ));
                break;
            }
            let name = row[name_column].as_str();
            if name.is_empty() {
                errors.push(table.error(
                    At::Cell(r, name_column),
                    "a member without a name".to_string(),
                    format!(
                        "every row names its member in the column `{}`",
                        table.columns[name_column]
                    ),
                ));
                continue;
            }
            if name.len() > MAX_NAME_LEN {
                errors.push(table.error(
                    At::Cell(r, name_column),
                    format!("a name of {} bytes, over the limit of {MAX_NAME_LEN}", name.len()),
                    "use shorter names; a title can hold the long form",
                ));
                continue;
            }
            if let Some(&earlier) = first_row.get(name) {
                errors.push(table.error(
                    At::Cell(r, name_column),
                    format!("duplicate name {}", written(name)),
                    format!(
                        "{} is already on line {} of the table; every member is listed once",
                        written(name),
                        table.line_of(earlier)
                    ),
                ));
                continue;
            }
            if let Some(&(old, old_span)) = self.names.entries.get(name) {
                let hint = format!(
                    "{} is already {} (line {} of the rule file); members, groups, blocs, attributes, definitions and rules need distinct names",
                    written(name),
                    self.names.word(old),
                    self.names.line(old_span)
                );
                errors.push(table.error(
                    At::Cell(r, name_column),
                    format!("duplicate name {}", written(name)),
                    hint,
                ));
                continue;
            }
            first_row.insert(name, r);
            let mut weights = Vec::with_capacity(columns.len());
            for (k, column) in columns.iter().enumerate() {
                let (Some(c), Some(a)) = (*column, attributes[k]) else {
                    continue;
                };
                let decimals = self.decimals(a);
                let parsed = amount::parse(&row[c], decimals).and_then(|v| match decimals {
                    0 if v > u128::from(u64::MAX) => Err(amount::AmountError::TooLarge),
                    _ => Ok(v),
                });
                match parsed {
                    Ok(v) => weights.push((a, v)),
                    Err(e) => {
                        let (message, hint) = e.describe(&row[c], &self.attributes[a].0);
                        errors.push(table.error(At::Cell(r, c), message, hint));
                    }
                }
            }
            let kind = Kind::Member(self.members.len());
            self.names.entries.insert(name.to_string(), (kind, decl.span));
            self.members.push(Member {
                name: name.to_string(),
                span: decl.span,
                group: None,
            });
            self.member_weights.push(weights);
        }
        self.blocs[bloc].members = (first..self.members.len()).collect();
    }

    /// Each attribute's exact total, and the attributes whose weights are
    /// rounded to their declared unit because the exact amounts do not fit
    /// the core (totals above `MAX_TOTAL`).
    fn scale(&mut self, errors: &mut CappedErrors) {
        use clout_core::limits::MAX_TOTAL;
        let k = self.attributes.len();
        self.amounts.resize(k, None);
        self.scaled = vec![None; k];
        let mut totals: Vec<Option<u128>> = vec![Some(0); k];
        for weights in &self.member_weights {
            for &(a, w) in weights {
                totals[a] = totals[a]
                    .and_then(|t| t.checked_add(w))
                    .filter(|&t| t <= amount::MAX_EXACT_TOTAL);
            }
        }
        for (a, total) in totals.into_iter().enumerate() {
            let (name, span) = &self.attributes[a];
            let spec = self.amounts[a];
            let at = spec.map_or(*span, |s| s.span);
            let Some(total) = total else {
                errors.push(
                    Diagnostic::error(at, format!("the amounts of `{name}` add up to more than 2^94 - 1 base units"))
                        .with_hint("exact amounts total at most 2^94 - 1 base units; declare fewer decimals if the data allows"),
                );
                continue;
            };
            if total <= u128::from(MAX_TOTAL) {
                continue;
            }
            let Some(AmountSpec {
                decimals,
                unit: Some(unit),
                ..
            }) = spec
            else {
                let hint = match spec {
                    Some(s) => format!(
                        "declare a unit the weights are counted in, e.g. `attribute {name} decimals {} unit {}`; the report then certifies the rounding",
                        s.decimals,
                        suggested_unit(total, s.decimals)
                    ),
                    None => "express the weights in a coarser unit".to_string(),
                };
                errors.push(
                    Diagnostic::error(
                        at,
                        format!("the weights of `{name}` add up to more than 2^64 - 4"),
                    )
                    .with_hint(hint),
                );
                continue;
            };
            let rounded: Option<u128> = self
                .member_weights
                .iter()
                .flat_map(|w| w.iter().filter(|(b, _)| *b == a))
                .try_fold(0u128, |t, &(_, w)| t.checked_add(amount::round_to_unit(w, unit)));
            if rounded.is_none_or(|t| t > u128::from(MAX_TOTAL)) {
                errors.push(
                    Diagnostic::error(at, format!("in units of the declared unit the weights of `{name}` still add up to more than 2^64 - 4"))
                        .with_hint(format!("declare a larger unit, e.g. `unit {}`", suggested_unit(total, decimals))),
                );
                continue;
            }
            self.scaled[a] = Some(unit);
        }
    }

    /// Member `i`'s weight in attribute `a` as the core counts it: the exact
    /// amount, or rounded to the attribute's unit.
    pub fn weight_of(&self, a: usize, exact: u128) -> u64 {
        let w = match self.scaled.get(a).copied().flatten() {
            Some(unit) => amount::round_to_unit(exact, unit),
            None => exact,
        };
        u64::try_from(w).unwrap_or(u64::MAX)
    }

    fn attribute(&mut self, name: &syntax::Name, errors: &mut CappedErrors) -> Option<usize> {
        if let Some(a) = self.attributes.iter().position(|(n, _)| *n == name.text) {
            return Some(a);
        }
        if self.attributes.len() >= MAX_ATTRIBUTES {
            errors.push(
                Diagnostic::error(name.span, format!("more than {MAX_ATTRIBUTES} attributes"))
                    .with_hint(format!("a rule holds at most {MAX_ATTRIBUTES} weight attributes")),
            );
            return None;
        }
        self.attributes.push((name.text.clone(), name.span));
        Some(self.attributes.len() - 1)
    }

    fn declare_member(&mut self, m: &MemberDecl, errors: &mut CappedErrors) {
        let weights = self.weights_of(&m.weights, errors);
        if self.members.len() >= MAX_MEMBERS {
            errors.push(too_many_members(m.name.span));
            return;
        }
        let kind = Kind::Member(self.members.len());
        if self.names.claim(&m.name.text, m.name.span, kind, errors) {
            self.members.push(Member {
                name: m.name.text.clone(),
                span: m.span,
                group: None,
            });
            self.member_weights.push(weights);
        }
    }

    fn declare_group(&mut self, g: &GroupDecl, errors: &mut CappedErrors) {
        let weights = self.weights_of(&g.weights, errors);
        let weights: Vec<(usize, u128)> = weights;
        let (count, count_span) = g.count;
        if count == 0 {
            errors.push(
                Diagnostic::error(count_span, "a group of zero members")
                    .with_hint("`members NAME xK` needs K of at least 1"),
            );
            return;
        }
        // Checked before any member is made: `x99999999` allocates nothing.
        if count > (MAX_MEMBERS - self.members.len()) as u64 {
            errors.push(too_many_members(count_span));
            return;
        }
        let bloc = self.blocs.len();
        if !self
            .names
            .claim(&g.name.text, g.name.span, Kind::Bloc(bloc), errors)
        {
            return;
        }
        let group = self.groups.len();
        let first = self.members.len();
        for k in 1..=count {
            let name = format!("{}{k}", g.name.text);
            if let Some(&(old, old_span)) = self.names.entries.get(&name) {
                let hint = format!(
                    "`{name}` is already {} (line {}); rename the group or that name",
                    self.names.word(old),
                    self.names.line(old_span)
                );
                errors.push(
                    Diagnostic::error(
                        g.name.span,
                        format!(
                            "group `{}` makes a member `{name}` that already exists",
                            g.name.text
                        ),
                    )
                    .with_hint(hint),
                );
                continue;
            }
            let kind = Kind::Member(self.members.len());
            self.names.entries.insert(name.clone(), (kind, g.name.span));
            self.members.push(Member {
                name,
                span: g.span,
                group: Some(group),
            });
            self.member_weights.push(weights.clone());
        }
        let len = self.members.len() - first;
        self.groups.push(Group {
            name: g.name.text.clone(),
            span: g.name.span,
            first,
            len,
        });
        self.push_bloc(&g.name, None, (first..first + len).collect());
    }
}

/// The smallest power of ten, written in the attribute's own unit (`0.001`,
/// `1`, `1000`), that brings `total` base units to at most 10^15 (room to
/// spare below 2^64, and fine enough for a small rounding window).
pub(super) fn suggested_unit(total: u128, decimals: u32) -> String {
    let mut k = 0u32;
    while k < 38 && total / amount::pow10(k) > 1_000_000_000_000_000 {
        k += 1;
    }
    if k >= decimals {
        format!("1{}", "0".repeat((k - decimals) as usize))
    } else {
        format!("0.{}1", "0".repeat((decimals - k - 1) as usize))
    }
}

#[cfg(test)]
mod tests {
    use super::super::testing::run;
    use super::*;
    use crate::syntax::{parse_recovering, File};

    /// Runs pass 1 on `source`; the declared members and the errors.
    fn declare_in(source: &str) -> (Vec<String>, Vec<String>) {
        run(source, |d, _| d.members.iter().map(|m| m.name.clone()).collect())
    }

    #[test]
    fn groups_make_numbered_members_and_one_namespace_holds_all() {
        let (members, errors) = declare_in("member a seats=1\nmembers d x3 seats=2\nrule r = a\n");
        assert_eq!(members, ["a", "d1", "d2", "d3"]);
        assert!(errors.is_empty(), "{errors:?}");
        let (_, errors) = declare_in("member seats seats=1\nmembers d x2\nmember d2\nrule d1 = seats >= 1\n");
        assert_eq!(
            errors,
            [
                "3:8 duplicate name `d2`",
                "4:6 duplicate name `d1`",
                // An attribute is claimed where first used, after the declarations.
                "1:14 duplicate name `seats`",
                // `d1` was refused, so no rule is left.
                "4:21 the file declares no rule"
            ]
        );
    }

    #[test]
    fn duplicates_name_the_first_line_whatever_their_number() {
        let source = "member m seats=1\n".repeat(300) + "rule r = seats >= 1\n";
        let mut errors = CappedErrors::new();
        let parsed = parse_recovering(&source, &mut errors);
        let Some(File::Declarations(decls)) = parsed.file else {
            panic!()
        };
        declare(
            &source,
            &decls,
            parsed.set_aside,
            &mut super::super::NoTables,
            &mut errors,
        );
        assert_eq!(errors.total(), 299);
        let shown = errors.into_vec();
        assert!(shown
            .iter()
            .take(100)
            .all(|e| e.hint.as_deref().unwrap().contains("(line 1)")));
        assert_eq!(shown[100].message, "199 more errors not shown");
    }

    #[test]
    fn missing_members_and_rules_are_reported_unless_something_was_set_aside() {
        let (_, errors) = declare_in("title \"x\"\n");
        assert_eq!(
            errors,
            [
                "1:10 the file declares no members",
                "1:10 the file declares no rule"
            ]
        );
        // The broken `member` line may be the member: no "declares no members".
        let (_, errors) = declare_in("member a seats=\nrule r = a\n");
        assert_eq!(errors.len(), 1, "{errors:?}");
        assert!(errors[0].starts_with("2:1 expected an amount"), "{errors:?}");
    }

    #[test]
    fn duplicates_say_what_the_first_one_is() {
        let source =
            "members g x2\nbloc b = g1\nbloc g = g2\ndefine b = count >= 1\nrule r = b\nbloc r = g1\n";
        let errors = crate::compile(source).unwrap_err();
        let hints: Vec<&str> = errors.iter().map(|e| e.hint.as_deref().unwrap_or("")).collect();
        assert_eq!(errors.len(), 3);
        assert!(
            hints[0].starts_with("`g` is already a group (line 1)"),
            "{hints:?}"
        );
        assert!(
            hints[1].starts_with("`b` is already a bloc (line 2)"),
            "{hints:?}"
        );
        assert!(
            hints[2].starts_with("`r` is already a rule (line 5)"),
            "{hints:?}"
        );
    }
}
