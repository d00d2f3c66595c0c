//! Syntax tree to the core's rule IR: names resolved, every quota an exact
//! integer, one [`Rule`] per `rule` declaration.
//!
//! Passes: declare every name (members, groups, blocs, attributes,
//! definitions, rules share one namespace); resolve blocs; resolve each
//! definition and rule once into atoms with integer quotas (so an error in a
//! definition is reported once, not once per rule that uses it); then lower
//! each rule into postfix nodes, giving each rule the declared attributes
//! plus one attribute for `count`, each bloc and each member it names alone.
//!
//! Quotas use [`clout_core::quota`] (`u128` intermediates, no floats). A
//! quota of 0 (met by everyone) or above its total (met by no one) is an
//! error. Time O(members * attributes + source); every collection is bounded
//! by the core's limits before it is allocated.

use std::collections::HashMap;

use clout_core::limits::{MAX_ATTRIBUTES, MAX_DEPTH, MAX_MEMBERS, MAX_NODES, MAX_TOTAL};
use clout_core::quota::{self, Bound};
use clout_core::{Atom, Condition as CoreCondition, Error as CoreError, Linear, Node, Rule};

use crate::diagnostic::{closest, limit, Diagnostic, Span, MAX_DIAGNOSTICS};
use crate::syntax::{
    self, AmountValue, BlocDecl, Comparison, Declaration, Expr, Game, GroupDecl, GroupSide, GroupWord,
    MemberDecl, NamedExpr, Threshold, MAX_NAME_LEN,
};

/// A compiled rule file: the members, their weights, and every rule.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RuleFile {
    /// The `title`, if any.
    pub title: Option<String>,
    /// Members in declaration order (a group's members in order 1..K).
    pub members: Vec<Member>,
    /// `members NAME xK` declarations.
    pub groups: Vec<Group>,
    /// Blocs, including one per group (named like the group).
    pub blocs: Vec<Bloc>,
    /// Declared attributes in order of first appearance.
    pub attributes: Vec<String>,
    /// Declared weights, attribute-major: `weights[a * members + i]`.
    pub weights: Vec<u64>,
    /// Rules in declaration order; the first is the default.
    pub rules: Vec<CompiledRule>,
}

/// One member.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Member {
    /// Its name.
    pub name: String,
    /// Where it is declared.
    pub span: Span,
    /// The group it belongs to, if declared by `members`.
    pub group: Option<usize>,
}

/// `members NAME xK`: members `first .. first + len`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Group {
    /// The group's name.
    pub name: String,
    /// Where it is declared.
    pub span: Span,
    /// Index of NAME1.
    pub first: usize,
    /// K.
    pub len: usize,
}

/// A named set of members.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Bloc {
    /// Its name.
    pub name: String,
    /// Where it is declared.
    pub span: Span,
    /// Member indices, ascending, without repeats.
    pub members: Vec<usize>,
}

/// One compiled rule.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CompiledRule {
    /// The rule's name.
    pub name: String,
    /// Where the name is written.
    pub span: Span,
    /// The condition as written (white space collapsed).
    pub text: String,
    /// The rule in the core's IR.
    pub rule: Rule<Vec<u64>>,
    /// One entry per attribute of [`Self::rule`].
    pub attributes: Vec<Attribute>,
    /// One entry per atom of [`Self::rule`].
    pub conditions: Vec<Condition>,
}

/// What an attribute of a compiled rule stands for.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Attribute {
    /// Its name: the declared attribute, `count`, or the bloc or member name.
    pub name: String,
    /// Where it comes from.
    pub kind: AttributeKind,
}

/// Where an attribute of a compiled rule comes from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AttributeKind {
    /// Declared in member lines.
    Declared,
    /// `count`: 1 for every member.
    Count,
    /// 1 on the bloc's (or group's) members.
    Bloc,
    /// 1 on one member named alone.
    Member,
}

/// The source of one atom.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Condition {
    /// The condition as written.
    pub text: String,
    /// Where it is written.
    pub span: Span,
}

impl RuleFile {
    /// The rule called `name`, or the first rule for `None`.
    pub fn rule(&self, name: Option<&str>) -> Option<&CompiledRule> {
        match name {
            None => self.rules.first(),
            Some(n) => self.rules.iter().find(|r| r.name == n),
        }
    }

    /// Member `i`'s weight in declared attribute `a`.
    pub fn weight(&self, attribute: usize, member: usize) -> u64 {
        self.weights
            .get(attribute * self.members.len() + member)
            .copied()
            .unwrap_or(0)
    }

    /// The members a name stands for: a member, a group, a bloc, or a range
    /// `NAMEi..NAMEj` of one group's members. `None` for an unknown name.
    pub fn members_named(&self, name: &str) -> Option<Vec<usize>> {
        if let Some(i) = self.members.iter().position(|m| m.name == name) {
            return Some(vec![i]);
        }
        if let Some(b) = self.blocs.iter().find(|b| b.name == name) {
            return Some(b.members.clone());
        }
        let (from, to) = name.split_once("..")?;
        let from = self.members.iter().position(|m| m.name == from)?;
        let to = self.members.iter().position(|m| m.name == to)?;
        let same_group =
            self.members[from].group.is_some() && self.members[from].group == self.members[to].group;
        (same_group && from <= to).then(|| (from..=to).collect())
    }

    /// Every name [`Self::members_named`] knows, for suggestions.
    pub fn member_and_bloc_names(&self) -> impl Iterator<Item = &str> {
        self.members
            .iter()
            .map(|m| m.name.as_str())
            .chain(self.blocs.iter().map(|b| b.name.as_str()))
    }

    /// Names of `members` (ascending indices), with runs of one group's
    /// members written `NAMEi..NAMEj`.
    pub fn describe_members(&self, members: &[usize]) -> Vec<String> {
        let mut out = Vec::new();
        let mut k = 0;
        while k < members.len() {
            let first = members[k];
            let mut last = k;
            let group = self.members.get(first).and_then(|m| m.group);
            while group.is_some()
                && last + 1 < members.len()
                && members[last + 1] == members[last] + 1
                && self.members.get(members[last + 1]).and_then(|m| m.group) == group
            {
                last += 1;
            }
            let name = |i: usize| self.members.get(i).map_or("?", |m| m.name.as_str());
            match last - k {
                0 => out.push(name(first).to_string()),
                1 => {
                    out.push(name(first).to_string());
                    out.push(name(members[last]).to_string());
                }
                _ => out.push(format!("{}..{}", name(first), name(members[last]))),
            }
            k = last + 1;
        }
        out
    }
}

/// Compiles a rule file. Returns every error found.
///
/// At most [`MAX_DIAGNOSTICS`](crate::diagnostic::MAX_DIAGNOSTICS) errors are
/// kept, followed by a note that counts the rest.
pub fn compile(source: &str) -> Result<RuleFile, Vec<Diagnostic>> {
    let result = match syntax::parse(source).map_err(limit)? {
        syntax::File::Game(g) => compile_game(source, &g),
        syntax::File::Declarations(d) => Compiler::new(source).run(&d),
    };
    result.map_err(limit)
}

/// Drops comments and collapses white space, so that conditions print on one line.
fn one_line(text: &str) -> String {
    text.lines()
        .map(|l| l.split('#').next().unwrap_or(""))
        .flat_map(str::split_whitespace)
        .collect::<Vec<_>>()
        .join(" ")
}

fn compile_game(source: &str, g: &Game) -> Result<RuleFile, Vec<Diagnostic>> {
    let mut n: u64 = 0;
    for w in &g.weights {
        if w.repeat == 0 {
            return Err(vec![Diagnostic::error(w.span, "a weight repeated zero times")
                .with_hint("`w xK` needs K of at least 1")]);
        }
        n = n.saturating_add(w.repeat);
        if n > MAX_MEMBERS as u64 {
            return Err(vec![too_many_members(w.span)]);
        }
    }
    let weights: Vec<u64> = g
        .weights
        .iter()
        .flat_map(|w| std::iter::repeat_n(w.weight, w.repeat as usize))
        .collect();
    let total = weights.iter().try_fold(0u64, |s, &w| s.checked_add(w));
    let Some(total) = total.filter(|&t| t <= MAX_TOTAL) else {
        return Err(vec![Diagnostic::error(
            g.span,
            "the weights add up to more than 2^64 - 4",
        )]);
    };
    let (q, q_span) = g.quota;
    let text = format!("weight >= {q}");
    let subject = Subject {
        name: "weight",
        total,
        against: false,
        bloc: false,
    };
    check_quota(q_span, &text, q, &subject)?;
    let rule = Rule::weighted(q, weights.clone()).map_err(|e| vec![rule_error(g.span, "game", e)])?;
    let n = weights.len();
    let members = (1..=n)
        .map(|i| Member {
            name: format!("p{i}"),
            span: g.span,
            group: Some(0),
        })
        .collect();
    Ok(RuleFile {
        title: None,
        members,
        // The members form one group `p`, so that `p1..p5` names a range.
        groups: vec![Group {
            name: "p".to_string(),
            span: g.span,
            first: 0,
            len: n,
        }],
        blocs: vec![Bloc {
            name: "p".to_string(),
            span: g.span,
            members: (0..n).collect(),
        }],
        attributes: vec!["weight".to_string()],
        weights,
        rules: vec![CompiledRule {
            name: "game".to_string(),
            span: g.span,
            text: one_line(g.span.text(source)),
            rule,
            attributes: vec![Attribute {
                name: "weight".to_string(),
                kind: AttributeKind::Declared,
            }],
            conditions: vec![Condition { text, span: q_span }],
        }],
    })
}

fn too_many_members(span: Span) -> Diagnostic {
    Diagnostic::error(span, format!("more than {MAX_MEMBERS} members")).with_hint(format!(
        "a rule holds at most {MAX_MEMBERS} members; model a large chamber as one group with `members NAME xK`"
    ))
}

/// What a condition sums, for messages: `seats`, `count` or a bloc.
struct Subject<'n> {
    /// As written in the file.
    name: &'n str,
    /// The total over all members.
    total: u64,
    /// The sum is over the no-voters (`against`).
    against: bool,
    /// A bloc or group: the total is its head count.
    bloc: bool,
}

/// The quota must be reachable by the grand coalition and not met by the empty one.
fn check_quota(span: Span, text: &str, q: u64, s: &Subject<'_>) -> Result<(), Vec<Diagnostic>> {
    let (name, total) = (s.name, s.total);
    let of = if s.bloc {
        format!("the {total} members of `{name}`")
    } else if name == "count" {
        format!("{total} members in all")
    } else {
        format!("a total of {total} `{name}`")
    };
    let (message, hint) = if q == 0 {
        let hint = if s.against {
            format!(
                "with {of}, that many votes against can never happen; lower the amount to at most {total}"
            )
        } else {
            format!("a condition every coalition meets does nothing; raise the amount ({of})")
        };
        (format!("`{text}` is met even when nobody votes yes"), hint)
    } else if q > total {
        let hint = if s.against {
            "no votes against at all is written `< 1`; a smaller amount cannot be met".to_string()
        } else {
            format!("lower the amount to at most {total}, or write a share such as `{name} >= 2/3`")
        };
        (
            format!("no coalition can meet `{text}`: it needs {q} of {of}"),
            hint,
        )
    } else {
        return Ok(());
    };
    Err(vec![Diagnostic::error(span, message).with_hint(hint)])
}

fn gcd(a: i128, b: i128) -> i128 {
    if b == 0 {
        a
    } else {
        gcd(b, a % b)
    }
}

fn rule_error(span: Span, name: &str, e: CoreError) -> Diagnostic {
    let (message, hint) = match e {
        CoreError::TooManyAtoms { atoms, limit } => (
            format!("rule `{name}` has {atoms} conditions, more than the limit of {limit}"),
            "share repeated conditions through `define`, or split the rule",
        ),
        CoreError::TooManyAttributes { attributes, limit } => (
            format!("rule `{name}` needs {attributes} weight attributes, more than the limit of {limit}"),
            "each declared attribute, `count`, each bloc and each member named alone is one attribute",
        ),
        CoreError::TooManyNodes { limit, .. } => (
            format!("rule `{name}` has more than {limit} parts (conditions plus `and` / `or`)"),
            "simplify the rule or split it",
        ),
        CoreError::TooDeep { limit, .. } => (
            format!("rule `{name}` nests `and` / `or` deeper than {limit}"),
            "flatten the nesting",
        ),
        other => (
            format!("rule `{name}`: {other}"),
            "check the rule against the limits in the reference",
        ),
    };
    Diagnostic::error(span, message).with_hint(hint)
}

/// What a name stands for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Kind {
    Member(usize),
    Bloc(usize),
    Attribute(usize),
    Named(usize),
}

/// A definition or rule, resolved once.
struct Named<'a> {
    decl: &'a NamedExpr,
    is_rule: bool,
    resolved: Option<Resolved>,
}

/// An attribute of a rule before lowering.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
enum Key {
    Declared(usize),
    Count,
    Bloc(usize),
    Member(usize),
}

#[derive(Clone, Debug)]
enum Resolved {
    Atom {
        key: Key,
        quota: u64,
        span: Span,
    },
    /// A four-state condition `yes*Y + no*N + abstain*A >= bound` on `key`.
    Linear {
        key: Key,
        coefficients: [i32; 3],
        bound: i128,
        span: Span,
    },
    All(Vec<Resolved>),
    Any(Vec<Resolved>),
    Ref(usize),
}

struct Compiler<'a> {
    source: &'a str,
    errors: Vec<Diagnostic>,
    names: HashMap<String, (Kind, Span)>,
    title: Option<(String, Span)>,
    members: Vec<Member>,
    member_weights: Vec<Vec<(usize, u64)>>,
    groups: Vec<Group>,
    blocs: Vec<Bloc>,
    bloc_decls: Vec<Option<&'a BlocDecl>>,
    attributes: Vec<(String, Span)>,
    totals: Vec<Option<u64>>,
    named: Vec<Named<'a>>,
}

impl<'a> Compiler<'a> {
    fn new(source: &'a str) -> Self {
        Compiler {
            source,
            errors: Vec::new(),
            names: HashMap::new(),
            title: None,
            members: Vec::new(),
            member_weights: Vec::new(),
            groups: Vec::new(),
            blocs: Vec::new(),
            bloc_decls: Vec::new(),
            attributes: Vec::new(),
            totals: Vec::new(),
            named: Vec::new(),
        }
    }

    fn run(mut self, declarations: &'a [Declaration]) -> Result<RuleFile, Vec<Diagnostic>> {
        for d in declarations {
            self.declare(d);
        }
        self.check_attribute_names();
        let last = syntax::end_of_content(self.source, self.source.len());
        let end = Span::new(last, last);
        let any_member = declarations
            .iter()
            .any(|d| matches!(d, Declaration::Member(_) | Declaration::Group(_)));
        if !any_member {
            self.errors.push(
                Diagnostic::error(end, "the file declares no members")
                    .with_hint("declare members with `member NAME attr=N` or `members NAME xK attr=N`"),
            );
        }
        if !self.named.iter().any(|n| n.is_rule) {
            self.errors.push(
                Diagnostic::error(end, "the file declares no rule")
                    .with_hint("add a rule such as `rule passage = count > 1/2`"),
            );
        }
        if !self.errors.is_empty() {
            return Err(self.errors);
        }
        for b in 0..self.bloc_decls.len() {
            self.resolve_bloc(b, &mut Vec::new());
        }
        self.compute_totals();
        for k in 0..self.named.len() {
            let decl = self.named[k].decl;
            self.named[k].resolved = self.resolve(&decl.expr);
        }
        self.check_cycles();
        if !self.errors.is_empty() {
            return Err(self.errors);
        }
        let weights = self.weight_table();
        let mut rules = Vec::new();
        for k in 0..self.named.len() {
            if self.named[k].is_rule {
                if let Some(r) = self.lower_rule(k, &weights) {
                    rules.push(r);
                }
            }
        }
        if !self.errors.is_empty() {
            return Err(self.errors);
        }
        Ok(RuleFile {
            title: self.title.map(|(t, _)| t),
            members: self.members,
            groups: self.groups,
            blocs: self.blocs,
            attributes: self.attributes.into_iter().map(|(a, _)| a).collect(),
            weights,
            rules,
        })
    }

    fn line(&self, span: Span) -> usize {
        span.line_col(self.source).0
    }

    fn kind_word(&self, kind: Kind) -> &'static str {
        match kind {
            Kind::Member(_) => "a member",
            Kind::Bloc(b)
                if self
                    .blocs
                    .get(b)
                    .is_some_and(|x| self.groups.iter().any(|g| g.name == x.name)) =>
            {
                "a group"
            }
            Kind::Bloc(_) => "a bloc",
            Kind::Attribute(_) => "an attribute",
            Kind::Named(k) if self.named.get(k).is_some_and(|n| n.is_rule) => "a rule",
            Kind::Named(_) => "a definition",
        }
    }

    /// Registers a name; reports a duplicate and returns false.
    fn claim(&mut self, name: &str, span: Span, kind: Kind) -> bool {
        if name.len() > MAX_NAME_LEN {
            self.errors.push(
                Diagnostic::error(
                    span,
                    format!("a name of {} bytes, over the limit of {MAX_NAME_LEN}", name.len()),
                )
                .with_hint("use a shorter name; a title can hold the long form"),
            );
            return false;
        }
        if let Some(&(old, old_span)) = self.names.get(name) {
            let message = format!("duplicate name `{name}`");
            // Past the diagnostics that are shown, skip the line lookup (a scan of the file).
            let line = if self.errors.len() < MAX_DIAGNOSTICS {
                format!(" (line {})", self.line(old_span))
            } else {
                String::new()
            };
            let hint = format!(
                "`{name}` is already {}{line}; members, groups, blocs, attributes, definitions and rules need distinct names",
                self.kind_word(old),
            );
            self.errors.push(Diagnostic::error(span, message).with_hint(hint));
            return false;
        }
        self.names.insert(name.to_string(), (kind, span));
        true
    }

    fn declare(&mut self, d: &'a Declaration) {
        match d {
            Declaration::Title { text, span } => {
                if let Some((_, first)) = &self.title {
                    let hint = format!("the first title is on line {}", self.line(*first));
                    self.errors
                        .push(Diagnostic::error(*span, "a second title").with_hint(hint));
                } else {
                    self.title = Some((text.clone(), *span));
                }
            }
            Declaration::Member(m) => self.declare_member(m),
            Declaration::Group(g) => self.declare_group(g),
            Declaration::Bloc(b) => {
                let index = self.blocs.len();
                if self.claim(&b.name.text, b.name.span, Kind::Bloc(index)) {
                    self.blocs.push(Bloc {
                        name: b.name.text.clone(),
                        span: b.name.span,
                        members: Vec::new(),
                    });
                    self.bloc_decls.push(Some(b));
                }
            }
            Declaration::Define(n) | Declaration::Rule(n) => {
                let index = self.named.len();
                if self.claim(&n.name.text, n.name.span, Kind::Named(index)) {
                    self.named.push(Named {
                        decl: n,
                        is_rule: matches!(d, Declaration::Rule(_)),
                        resolved: None,
                    });
                }
            }
        }
    }

    fn weights_of(&mut self, weights: &[syntax::Weight]) -> Vec<(usize, u64)> {
        let mut out: Vec<(usize, u64)> = Vec::new();
        for w in weights {
            let Some(a) = self.attribute(&w.attribute) else {
                continue;
            };
            if out.iter().any(|&(b, _)| b == a) {
                self.errors.push(
                    Diagnostic::error(w.span, format!("`{}` is given twice", w.attribute.text))
                        .with_hint("give each attribute once per member"),
                );
                continue;
            }
            out.push((a, w.value));
        }
        out
    }

    fn attribute(&mut self, name: &syntax::Name) -> Option<usize> {
        if let Some(a) = self.attributes.iter().position(|(n, _)| *n == name.text) {
            return Some(a);
        }
        if self.attributes.len() >= MAX_ATTRIBUTES {
            self.errors.push(
                Diagnostic::error(name.span, format!("more than {MAX_ATTRIBUTES} attributes"))
                    .with_hint(format!("a rule holds at most {MAX_ATTRIBUTES} weight attributes")),
            );
            return None;
        }
        self.attributes.push((name.text.clone(), name.span));
        Some(self.attributes.len() - 1)
    }

    fn declare_member(&mut self, m: &MemberDecl) {
        let weights = self.weights_of(&m.weights);
        if self.members.len() >= MAX_MEMBERS {
            self.errors.push(too_many_members(m.name.span));
            return;
        }
        if self.claim(&m.name.text, m.name.span, Kind::Member(self.members.len())) {
            self.members.push(Member {
                name: m.name.text.clone(),
                span: m.span,
                group: None,
            });
            self.member_weights.push(weights);
        }
    }

    fn declare_group(&mut self, g: &GroupDecl) {
        let weights = self.weights_of(&g.weights);
        let (count, count_span) = g.count;
        if count == 0 {
            self.errors.push(
                Diagnostic::error(count_span, "a group of zero members")
                    .with_hint("`members NAME xK` needs K of at least 1"),
            );
            return;
        }
        if count > (MAX_MEMBERS - self.members.len()) as u64 {
            self.errors.push(too_many_members(count_span));
            return;
        }
        let bloc = self.blocs.len();
        if !self.claim(&g.name.text, g.name.span, Kind::Bloc(bloc)) {
            return;
        }
        let group = self.groups.len();
        let first = self.members.len();
        for k in 1..=count {
            let name = format!("{}{k}", g.name.text);
            if let Some(&(old, old_span)) = self.names.get(&name) {
                let hint = format!(
                    "`{name}` is already {} (line {}); rename the group or that name",
                    self.kind_word(old),
                    self.line(old_span)
                );
                self.errors.push(
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
            self.names
                .insert(name.clone(), (Kind::Member(self.members.len()), g.name.span));
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
        self.blocs.push(Bloc {
            name: g.name.text.clone(),
            span: g.name.span,
            members: (first..first + len).collect(),
        });
        self.bloc_decls.push(None);
    }

    /// Attributes share the namespace: an attribute may not also be declared as something else.
    fn check_attribute_names(&mut self) {
        for a in 0..self.attributes.len() {
            let (name, span) = self.attributes[a].clone();
            self.claim(&name, span, Kind::Attribute(a));
        }
    }

    fn suggestion(&self, word: &str, fits: impl Fn(Kind) -> bool) -> Option<String> {
        // Past the diagnostics that are shown, skip the search (it compares every name).
        if self.errors.len() >= MAX_DIAGNOSTICS {
            return None;
        }
        let candidates: Vec<&str> = self
            .names
            .iter()
            .filter(|(_, (k, _))| fits(*k))
            .map(|(n, _)| n.as_str())
            .collect();
        let mut sorted = candidates;
        sorted.sort_unstable();
        closest(word, sorted).map(|c| format!("did you mean `{c}`?"))
    }

    fn unknown(&mut self, name: &syntax::Name, what: &str, fits: impl Fn(Kind) -> bool, otherwise: &str) {
        let hint = self
            .suggestion(&name.text, fits)
            .unwrap_or_else(|| otherwise.to_string());
        self.errors
            .push(Diagnostic::error(name.span, format!("unknown {what} `{}`", name.text)).with_hint(hint));
    }

    fn resolve_bloc(&mut self, b: usize, path: &mut Vec<usize>) {
        let Some(decl) = self.bloc_decls[b] else {
            return;
        };
        if path.contains(&b) {
            let cycle: Vec<&str> = path.iter().map(|&x| self.blocs[x].name.as_str()).collect();
            let msg = format!(
                "bloc `{}` contains itself ({} -> {})",
                self.blocs[b].name,
                cycle.join(" -> "),
                self.blocs[b].name
            );
            self.errors.push(
                Diagnostic::error(decl.name.span, msg)
                    .with_hint("a bloc lists members, groups or other blocs, without cycles"),
            );
            self.bloc_decls[b] = None;
            return;
        }
        path.push(b);
        let mut members = Vec::new();
        for (k, part) in decl.parts.iter().enumerate() {
            if decl.parts[..k].iter().any(|p| p.text == part.text) {
                self.errors.push(
                    Diagnostic::error(
                        part.span,
                        format!("`{}` is listed twice in bloc `{}`", part.text, decl.name.text),
                    )
                    .with_hint("list each member once"),
                );
                continue;
            }
            match self.names.get(&part.text).map(|x| x.0) {
                Some(Kind::Member(i)) => members.push(i),
                Some(Kind::Bloc(c)) => {
                    self.resolve_bloc(c, path);
                    members.extend(self.blocs[c].members.iter().copied());
                }
                Some(other) => {
                    let msg = format!(
                        "`{}` is {}, not a member, group or bloc",
                        part.text,
                        self.kind_word(other)
                    );
                    self.errors.push(
                        Diagnostic::error(part.span, msg)
                            .with_hint("a bloc lists members, groups or other blocs"),
                    );
                }
                None => self.unknown(
                    part,
                    "member",
                    |k| matches!(k, Kind::Member(_) | Kind::Bloc(_)),
                    "declare it with `member NAME ...` or `bloc NAME = ...`",
                ),
            }
        }
        path.pop();
        members.sort_unstable();
        members.dedup();
        self.blocs[b].members = members;
        self.bloc_decls[b] = None;
    }

    fn compute_totals(&mut self) {
        let mut totals: Vec<Option<u64>> = vec![Some(0); self.attributes.len()];
        for weights in &self.member_weights {
            for &(a, w) in weights {
                totals[a] = totals[a]
                    .and_then(|t| t.checked_add(w))
                    .filter(|&t| t <= MAX_TOTAL);
            }
        }
        for (a, t) in totals.iter().enumerate() {
            if t.is_none() {
                let (name, span) = &self.attributes[a];
                self.errors.push(
                    Diagnostic::error(
                        *span,
                        format!("the weights of `{name}` add up to more than 2^64 - 4"),
                    )
                    .with_hint("express the weights in a coarser unit"),
                );
            }
        }
        self.totals = totals;
    }

    fn weight_table(&self) -> Vec<u64> {
        let n = self.members.len();
        let mut table = vec![0u64; self.attributes.len() * n];
        for (i, weights) in self.member_weights.iter().enumerate() {
            for &(a, w) in weights {
                table[a * n + i] = w;
            }
        }
        table
    }

    fn text(&self, span: Span) -> String {
        one_line(span.text(self.source))
    }

    fn resolve(&mut self, e: &Expr) -> Option<Resolved> {
        match e {
            Expr::All(ops, _) | Expr::Any(ops, _) => {
                let mut out = Vec::with_capacity(ops.len());
                let mut ok = true;
                for op in ops {
                    match self.resolve(op) {
                        Some(r) => out.push(r),
                        None => ok = false,
                    }
                }
                let any = matches!(e, Expr::Any(..));
                ok.then_some(if any {
                    Resolved::Any(out)
                } else {
                    Resolved::All(out)
                })
            }
            Expr::Not(_, span) => {
                self.errors.push(
                    Diagnostic::error(*span, "`not` makes the rule non-monotone")
                        .with_hint("indices need rules where an extra yes vote never defeats a motion; state what passage requires, e.g. `seats against < 10` rather than `not seats >= 10`"),
                );
                None
            }
            Expr::Reference(name) => self.reference(name),
            Expr::OfBloc { amount, bloc, span } => self.of_bloc(amount, bloc, *span),
            Expr::Threshold(t) => self.threshold(t),
        }
    }

    fn reference(&mut self, name: &syntax::Name) -> Option<Resolved> {
        match self.names.get(&name.text).map(|x| x.0) {
            Some(Kind::Member(i)) => Some(Resolved::Atom {
                key: Key::Member(i),
                quota: 1,
                span: name.span,
            }),
            Some(Kind::Bloc(b)) => Some(Resolved::Atom {
                key: Key::Bloc(b),
                quota: self.blocs[b].members.len() as u64,
                span: name.span,
            }),
            Some(Kind::Named(k)) => Some(Resolved::Ref(k)),
            Some(Kind::Attribute(_)) => {
                self.errors.push(
                    Diagnostic::error(
                        name.span,
                        format!("`{}` is an attribute; compare it with an amount", name.text),
                    )
                    .with_hint(format!("for example `{0} > 1/2` or `{0} >= 10`", name.text)),
                );
                None
            }
            None => {
                self.unknown(
                    name,
                    "name",
                    |k| !matches!(k, Kind::Attribute(_)),
                    "a condition names a member, a bloc, a group, a definition or a rule declared in the file",
                );
                None
            }
        }
    }

    fn of_bloc(&mut self, amount: &syntax::Amount, bloc: &syntax::Name, span: Span) -> Option<Resolved> {
        let b = match self.names.get(&bloc.text).map(|x| x.0) {
            Some(Kind::Bloc(b)) => b,
            Some(Kind::Member(_)) => {
                self.errors.push(
                    Diagnostic::error(
                        bloc.span,
                        format!("`{}` is a member; `K of` needs a bloc or group", bloc.text),
                    )
                    .with_hint(format!("write `{}` alone to require its yes vote", bloc.text)),
                );
                return None;
            }
            Some(other) => {
                let msg = format!(
                    "`{}` is {}; `K of` needs a bloc or group",
                    bloc.text,
                    self.kind_word(other)
                );
                self.errors.push(
                    Diagnostic::error(bloc.span, msg)
                        .with_hint("for an attribute write `ATTRIBUTE >= AMOUNT`"),
                );
                return None;
            }
            None => {
                self.unknown(
                    bloc,
                    "bloc",
                    |k| matches!(k, Kind::Bloc(_)),
                    "declare it with `bloc NAME = member, member, ...`",
                );
                return None;
            }
        };
        let size = self.blocs[b].members.len() as u64;
        let quota = match amount.value {
            AmountValue::Integer(k) => k,
            AmountValue::Share {
                numerator,
                denominator,
                ..
            } => quota::at_least_share(numerator, denominator, size).ok()?,
        };
        let text = self.text(span);
        let subject = Subject {
            name: &bloc.text,
            total: size,
            against: false,
            bloc: true,
        };
        if let Err(mut e) = check_quota(span, &text, quota, &subject) {
            self.errors.append(&mut e);
            return None;
        }
        Some(Resolved::Atom {
            key: Key::Bloc(b),
            quota,
            span,
        })
    }

    fn threshold(&mut self, t: &Threshold) -> Option<Resolved> {
        let (key, total) = match &t.subject {
            syntax::Subject::Count(_) => (Key::Count, self.members.len() as u64),
            syntax::Subject::Name(name) => match self.names.get(&name.text).map(|x| x.0) {
                Some(Kind::Attribute(a)) => (Key::Declared(a), self.totals[a]?),
                Some(Kind::Bloc(b)) => (Key::Bloc(b), self.blocs[b].members.len() as u64),
                Some(Kind::Member(_)) => {
                    self.errors.push(
                        Diagnostic::error(
                            name.span,
                            format!("`{}` is a member, not an attribute", name.text),
                        )
                        .with_hint(format!("write `{}` alone to require its yes vote", name.text)),
                    );
                    return None;
                }
                Some(other) => {
                    let msg = format!("`{}` is {}, not an attribute", name.text, self.kind_word(other));
                    self.errors.push(
                        Diagnostic::error(name.span, msg).with_hint("write its name alone to require it"),
                    );
                    return None;
                }
                None => {
                    let mut known: Vec<&str> = self.attributes.iter().map(|(a, _)| a.as_str()).collect();
                    known.sort_unstable();
                    let hint = match self
                        .suggestion(&name.text, |k| matches!(k, Kind::Attribute(_) | Kind::Bloc(_)))
                    {
                        Some(s) => s,
                        None if known.is_empty() => {
                            "no member line gives any attribute; use `count` for the head count".to_string()
                        }
                        None => format!(
                            "the attributes are the names used in member lines: {}",
                            known.join(", ")
                        ),
                    };
                    self.errors.push(
                        Diagnostic::error(name.span, format!("unknown attribute `{}`", name.text))
                            .with_hint(hint),
                    );
                    return None;
                }
            },
        };
        let text = self.text(t.span);
        if t.is_four_state() {
            return self.four_state(t, key, total, &text);
        }
        let comparison = self.comparison(t, &text)?;
        let bound = match t.amount.value {
            AmountValue::Integer(k) => Bound::Amount(k),
            AmountValue::Share {
                numerator,
                denominator,
                ..
            } => Bound::Share {
                numerator,
                denominator,
            },
        };
        let result = if t.against.is_some() {
            quota::against(comparison, bound, total)
        } else {
            quota::threshold(comparison, bound, total)
        };
        let quota = match result {
            Ok(q) => q,
            Err(_) => {
                self.errors.push(
                    Diagnostic::error(t.amount.span, "the amount is too large")
                        .with_hint("amounts are at most 2^64 - 2"),
                );
                return None;
            }
        };
        let subject = Subject {
            name: t.subject.span().text(self.source),
            total,
            against: t.against.is_some(),
            bloc: matches!(key, Key::Bloc(_)),
        };
        if let Err(mut e) = check_quota(t.span, &text, quota, &subject) {
            self.errors.append(&mut e);
            return None;
        }
        Some(Resolved::Atom {
            key,
            quota,
            span: t.span,
        })
    }

    /// A condition with group words: `seats yes > 1/2 of cast`, `count
    /// present >= 1/3`, `tokens yes > tokens no`. Becomes one linear form
    /// `a*Y + b*N + c*A >= bound` over the attribute's yes, no and abstain
    /// sums, exact in integers, refused unless monotone in yes votes.
    fn four_state(&mut self, t: &Threshold, key: Key, total: u64, text: &str) -> Option<Resolved> {
        let (cmp, cmp_span) = t.comparison;
        if let Some(span) = t.against {
            self.errors.push(
                Diagnostic::error(span, "`against` cannot be combined with a group word")
                    .with_hint("the votes against are the group `no`: write e.g. `seats no < 10`"),
            );
            return None;
        }
        let left = t.group.map_or(GroupWord::Yes, |(g, _)| g).vector();
        // lhs - rhs = coefficients . (Y, N, A) - constant, compared with 0.
        let (mut coef, constant): ([i128; 3], i128) = match &t.side {
            None => match t.amount.value {
                AmountValue::Integer(k) => (left, i128::from(k)),
                AmountValue::Share {
                    numerator,
                    denominator,
                    ..
                } => {
                    // G >= p/q of the attribute's total  <=>  q G >= p T.
                    let (p, q) = (i128::from(numerator), i128::from(denominator));
                    (left.map(|x| x * q), p * i128::from(total))
                }
            },
            Some(GroupSide::ShareOf(word, span)) => match t.amount.value {
                AmountValue::Share {
                    numerator,
                    denominator,
                    ..
                } => {
                    let (p, q) = (i128::from(numerator), i128::from(denominator));
                    let right = word.vector();
                    ([0, 1, 2].map(|i| q * left[i] - p * right[i]), 0)
                }
                AmountValue::Integer(_) => {
                    self.errors.push(
                        Diagnostic::error(t.amount.span, format!("`of {}` needs a share", word.word()))
                            .with_hint(format!(
                                "write a fraction or a percentage, e.g. `1/2 of {}`",
                                word.word()
                            )),
                    );
                    let _ = span;
                    return None;
                }
            },
            Some(GroupSide::Sum(other, word, span)) => {
                if let Some(other) = other {
                    let same = match (other, &t.subject) {
                        (syntax::Subject::Count(_), syntax::Subject::Count(_)) => true,
                        (syntax::Subject::Name(a), syntax::Subject::Name(b)) => a.text == b.text,
                        _ => false,
                    };
                    if !same {
                        self.errors.push(
                            Diagnostic::error(
                                *span,
                                "both sides of a comparison must sum the same attribute",
                            )
                            .with_hint(format!(
                                "compare groups of one attribute, e.g. `{0} yes > {0} no`",
                                t.subject.span().text(self.source)
                            )),
                        );
                        return None;
                    }
                }
                let right = word.vector();
                ([0, 1, 2].map(|i| left[i] - right[i]), 0)
            }
        };
        // Everything as `coef . x >= bound`.
        let bound = match cmp {
            Comparison::AtLeast => constant,
            Comparison::MoreThan => constant + 1,
            Comparison::AtMost | Comparison::LessThan => {
                coef = coef.map(|x| -x);
                -constant + i128::from(cmp == Comparison::LessThan)
            }
            Comparison::Equal | Comparison::NotEqual | Comparison::Reversed => {
                self.errors.push(
                    Diagnostic::error(
                        cmp_span,
                        format!("`{}` cannot be used here", cmp_span.text(self.source)),
                    )
                    .with_hint("write `>=`, `>`, `<=` or `<`"),
                );
                return None;
            }
        };
        // Smallest integer form: divide by the gcd, rounding the bound up.
        let g = coef.iter().fold(0i128, |g, &x| gcd(g, x.abs()));
        let (coef, bound) = if g > 1 {
            (
                coef.map(|x| x / g),
                bound.div_euclid(g) + i128::from(bound.rem_euclid(g) != 0),
            )
        } else {
            (coef, bound)
        };
        let Ok(coefficients) =
            <[i32; 3]>::try_from(coef.map(|x| i32::try_from(x).unwrap_or(i32::MAX)).as_slice())
        else {
            return None;
        };
        if coef.iter().any(|x| i32::try_from(*x).is_err()) {
            self.errors.push(
                Diagnostic::error(
                    t.amount.span,
                    "the share is too precise for a four-state condition",
                )
                .with_hint("use fewer decimals in the percentage"),
            );
            return None;
        }
        let linear = Linear {
            attribute: 0,
            yes: coefficients[0],
            no: coefficients[1],
            abstain: coefficients[2],
            bound,
        };
        if linear.check_monotone().is_err() {
            let why = if coefficients[0] < 0 {
                "an extra yes vote could defeat the motion"
            } else if coefficients[0] < coefficients[1] {
                "switching a vote from no to yes could defeat the motion"
            } else {
                "switching from abstaining to yes could defeat the motion"
            };
            self.errors.push(
                Diagnostic::error(t.span, format!("`{text}` is not monotone: {why}"))
                    .with_hint("indices need rules where a yes vote never hurts; bound what passage requires, e.g. `seats yes > 1/2 of cast` or `count no < 10`"),
            );
            return None;
        }
        // Over all four-state ballots the left side ranges from T * min to
        // T * max of (0, coefficients): refuse conditions that cannot vary.
        let t_total = i128::from(total);
        let lowest = t_total * coefficients.iter().map(|&c| i128::from(c)).fold(0, i128::min);
        let highest = t_total * coefficients.iter().map(|&c| i128::from(c)).fold(0, i128::max);
        if lowest >= bound {
            self.errors.push(
                Diagnostic::error(t.span, format!("`{text}` holds for every ballot"))
                    .with_hint("a condition every ballot meets does nothing; raise the amount"),
            );
            return None;
        }
        if highest < bound {
            self.errors.push(
                Diagnostic::error(t.span, format!("no ballot can meet `{text}`"))
                    .with_hint(format!("lower the amount (the total is {total})")),
            );
            return None;
        }
        Some(Resolved::Linear {
            key,
            coefficients,
            bound,
            span: t.span,
        })
    }

    /// The comparison in the core's terms, or an explained refusal.
    fn comparison(&mut self, t: &Threshold, text: &str) -> Option<quota::Comparison> {
        let (cmp, span) = t.comparison;
        let subject = t.subject.span().text(self.source);
        let amount = t.amount.span.text(self.source);
        let refuse = |message: String, hint: String| Diagnostic::error(span, message).with_hint(hint);
        let d = match (cmp, t.against.is_some()) {
            (Comparison::AtMost, true) => return Some(quota::Comparison::AtMost),
            (Comparison::LessThan, true) => return Some(quota::Comparison::LessThan),
            (Comparison::AtLeast, false) => return Some(quota::Comparison::AtLeast),
            (Comparison::MoreThan, false) => return Some(quota::Comparison::MoreThan),
            (Comparison::AtLeast | Comparison::MoreThan, true) => {
                let (op, unless) = if cmp == Comparison::AtLeast {
                    ("<", format!("{amount} or more"))
                } else {
                    ("<=", format!("more than {amount}"))
                };
                refuse(
                    format!("`{text}` is not monotone: more votes against would help the motion pass"),
                    format!("write what passage requires: `{subject} against {op} {amount}` passes unless {unless} vote no"),
                )
            }
            (Comparison::AtMost | Comparison::LessThan, false) => refuse(
                format!("`{text}` is not monotone: an extra yes vote could defeat the motion"),
                format!(
                    "indices need rules where more yes votes never hurt; to limit the votes against, write `{subject} against {} {amount}`",
                    if cmp == Comparison::AtMost { "<=" } else { "<" }
                ),
            ),
            (Comparison::Equal | Comparison::NotEqual, _) => refuse(
                format!("`{text}` is not monotone: an exact amount can be overshot by an extra yes vote"),
                format!("write a lower bound such as `{subject} >= {amount}`"),
            ),
            (Comparison::Reversed, _) => refuse(
                format!("`{}` is not a comparison of the language", span.text(self.source)),
                "write `>=` (at least) or `>` (more than)".to_string(),
            ),
        };
        self.errors.push(d);
        None
    }

    fn check_cycles(&mut self) {
        // Depth-first search over references; 0 = new, 1 = on the path, 2 = done.
        // `height[k]` is the longest chain of references below k, so a chain
        // declared bottom-up (d1 = d0, d2 = d1, ...) is measured too, and
        // lowering never recurses deeper than MAX_DEPTH.
        let mut state = vec![0u8; self.named.len()];
        let mut height = vec![0usize; self.named.len()];
        for k in 0..self.named.len() {
            let mut path = Vec::new();
            self.visit(k, &mut state, &mut height, &mut path);
        }
    }

    fn visit(&mut self, k: usize, state: &mut [u8], height: &mut [usize], path: &mut Vec<usize>) {
        match state[k] {
            2 => return,
            1 => {
                let names: Vec<&str> = path
                    .iter()
                    .skip_while(|&&x| x != k)
                    .map(|&x| self.named[x].decl.name.text.as_str())
                    .collect();
                let decl = self.named[k].decl;
                let msg = format!(
                    "`{}` refers to itself ({} -> {})",
                    decl.name.text,
                    names.join(" -> "),
                    decl.name.text
                );
                self.errors.push(
                    Diagnostic::error(decl.name.span, msg)
                        .with_hint("a definition or rule may use others, but not itself"),
                );
                return;
            }
            _ => {}
        }
        if path.len() > MAX_DEPTH {
            let decl = self.named[k].decl;
            height[k] = usize::MAX;
            self.errors.push(
                Diagnostic::error(
                    decl.name.span,
                    format!("definitions nested deeper than {MAX_DEPTH}"),
                )
                .with_hint("flatten the chain of definitions"),
            );
            state[k] = 2;
            return;
        }
        state[k] = 1;
        path.push(k);
        let mut refs = Vec::new();
        if let Some(r) = &self.named[k].resolved {
            collect_refs(r, &mut refs);
        }
        let mut below = 0usize;
        for r in refs {
            self.visit(r, state, height, path);
            below = below.max(height[r]);
        }
        path.pop();
        state[k] = 2;
        height[k] = below.saturating_add(1);
        if below != usize::MAX && height[k] > MAX_DEPTH {
            // Reported once, on the first definition past the limit; those above it stay quiet.
            let decl = self.named[k].decl;
            self.errors.push(
                Diagnostic::error(
                    decl.name.span,
                    format!("definitions nested deeper than {MAX_DEPTH}"),
                )
                .with_hint("flatten the chain of definitions"),
            );
            height[k] = usize::MAX;
        }
    }

    fn lower_rule(&mut self, k: usize, declared: &[u64]) -> Option<CompiledRule> {
        let decl = self.named[k].decl;
        let mut lowering = Lowering {
            declared: self.attributes.len(),
            keys: Vec::new(),
            atoms: Vec::new(),
            linear: Vec::new(),
            conditions: Vec::new(),
            nodes: Vec::new(),
            cache: HashMap::new(),
            too_big: false,
        };
        lowering.lower(k, &self.named, self.source);
        if lowering.too_big {
            self.errors.push(rule_error(
                decl.name.span,
                &decl.name.text,
                CoreError::TooManyNodes {
                    nodes: lowering.nodes.len(),
                    limit: MAX_NODES,
                },
            ));
            return None;
        }
        let n = self.members.len();
        let mut weights = declared.to_vec();
        let mut attributes: Vec<Attribute> = self
            .attributes
            .iter()
            .map(|(a, _)| Attribute {
                name: a.clone(),
                kind: AttributeKind::Declared,
            })
            .collect();
        for key in &lowering.keys {
            let start = weights.len();
            weights.resize(start + n, 0);
            let row = &mut weights[start..];
            let (name, kind) = match *key {
                Key::Count => {
                    row.fill(1);
                    ("count".to_string(), AttributeKind::Count)
                }
                Key::Bloc(b) => {
                    for &i in &self.blocs[b].members {
                        row[i] = 1;
                    }
                    (self.blocs[b].name.clone(), AttributeKind::Bloc)
                }
                Key::Member(i) => {
                    row[i] = 1;
                    (self.members[i].name.clone(), AttributeKind::Member)
                }
                Key::Declared(_) => continue,
            };
            attributes.push(Attribute { name, kind });
        }
        let conditions: Vec<CoreCondition> = lowering
            .atoms
            .iter()
            .zip(&lowering.linear)
            .map(|(a, l)| match l {
                Some(l) => CoreCondition::Linear(*l),
                None => CoreCondition::Yes(*a),
            })
            .collect();
        match Rule::with_conditions(n, weights, &conditions, &lowering.nodes) {
            Ok(rule) => Some(CompiledRule {
                name: decl.name.text.clone(),
                span: decl.name.span,
                text: self.text(decl.expr.span()),
                rule,
                attributes,
                conditions: lowering.conditions,
            }),
            Err(e) => {
                self.errors.push(rule_error(decl.name.span, &decl.name.text, e));
                None
            }
        }
    }
}

fn collect_refs(r: &Resolved, out: &mut Vec<usize>) {
    match r {
        Resolved::Ref(k) => out.push(*k),
        Resolved::All(v) | Resolved::Any(v) => v.iter().for_each(|x| collect_refs(x, out)),
        Resolved::Atom { .. } | Resolved::Linear { .. } => {}
    }
}

/// One rule's atoms, attributes and postfix nodes.
struct Lowering {
    declared: usize,
    keys: Vec<Key>,
    atoms: Vec<Atom>,
    /// The four-state form of each atom, if any.
    linear: Vec<Option<Linear>>,
    conditions: Vec<Condition>,
    nodes: Vec<Node>,
    /// Nodes of each definition already lowered in this rule: a second use
    /// repeats them, sharing the atoms.
    cache: HashMap<usize, Vec<Node>>,
    too_big: bool,
}

impl Lowering {
    fn lower(&mut self, k: usize, named: &[Named<'_>], source: &str) {
        if let Some(nodes) = self.cache.get(&k) {
            if self.nodes.len() + nodes.len() > MAX_NODES {
                self.too_big = true;
                return;
            }
            self.nodes.extend_from_slice(nodes);
            return;
        }
        let start = self.nodes.len();
        if let Some(r) = &named[k].resolved {
            self.lower_tree(r, named, source);
        }
        let nodes = self.nodes[start..].to_vec();
        self.cache.insert(k, nodes);
    }

    fn lower_tree(&mut self, r: &Resolved, named: &[Named<'_>], source: &str) {
        if self.too_big {
            return;
        }
        match r {
            Resolved::Linear {
                key,
                coefficients,
                bound,
                span,
            } => {
                let attribute = self.attribute(*key);
                self.atoms.push(Atom { attribute, quota: 0 });
                self.linear.push(Some(Linear {
                    attribute,
                    yes: coefficients[0],
                    no: coefficients[1],
                    abstain: coefficients[2],
                    bound: *bound,
                }));
                self.conditions.push(Condition {
                    text: one_line(span.text(source)),
                    span: *span,
                });
                self.push(Node::Atom((self.atoms.len() - 1) as u16));
            }
            Resolved::Atom { key, quota, span } => {
                let attribute = self.attribute(*key);
                self.linear.push(None);
                self.atoms.push(Atom {
                    attribute,
                    quota: *quota,
                });
                self.conditions.push(Condition {
                    text: one_line(span.text(source)),
                    span: *span,
                });
                self.push(Node::Atom((self.atoms.len() - 1) as u16));
            }
            Resolved::All(v) | Resolved::Any(v) => {
                for x in v {
                    self.lower_tree(x, named, source);
                }
                let k = v.len().min(usize::from(u16::MAX)) as u16;
                self.push(if matches!(r, Resolved::All(_)) {
                    Node::All(k)
                } else {
                    Node::Any(k)
                });
            }
            Resolved::Ref(k) => self.lower(*k, named, source),
        }
    }

    fn push(&mut self, node: Node) {
        if self.nodes.len() >= MAX_NODES || self.atoms.len() > u16::MAX as usize {
            self.too_big = true;
        } else {
            self.nodes.push(node);
        }
    }

    fn attribute(&mut self, key: Key) -> u16 {
        let index = match key {
            Key::Declared(a) => a,
            _ => {
                let pos = self.keys.iter().position(|&k| k == key).unwrap_or_else(|| {
                    self.keys.push(key);
                    self.keys.len() - 1
                });
                self.declared + pos
            }
        };
        index.min(usize::from(u16::MAX)) as u16
    }
}
