//! The syntax tree: what a rule file says, every node with its [`Span`].
//!
//! Built by [`super::parse`]; numbers are already checked (every integer
//! fits in `u64`, every share is at most 1 with a non-zero denominator).
//! The tree holds no pest types.

use crate::diagnostic::Span;

/// A name with its place in the source.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Name {
    /// The identifier.
    pub text: String,
    /// Where it is written.
    pub span: Span,
    /// Written in quotes (`"0x3f…"`).
    pub quoted: bool,
}

/// A parsed file: declarations, or the trade's `[q; w1, ..., wn]` notation.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum File {
    /// A file of declarations.
    Declarations(Vec<Declaration>),
    /// `[q; w1, ..., wn]`.
    Game(Game),
}

/// `[q; w1, ..., wn]`, with `w xK` standing for K copies of `w`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Game {
    /// The quota and where it is written.
    pub quota: (u64, Span),
    /// Each weight with its repeat count (1 when not repeated).
    pub weights: Vec<GameWeight>,
    /// The whole notation.
    pub span: Span,
}

/// One entry of a `[q; ...]` weight list.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct GameWeight {
    /// The weight.
    pub weight: u64,
    /// How many members carry it.
    pub repeat: u64,
    /// The entry.
    pub span: Span,
}

/// One declaration.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Declaration {
    /// `title "..."`.
    Title {
        /// The text between the quotes.
        text: String,
        /// The whole declaration.
        span: Span,
    },
    /// `member NAME attr=v ...`.
    Member(MemberDecl),
    /// `members NAME xK attr=v ...`: K identical members NAME1..NAMEK.
    Group(GroupDecl),
    /// `members NAME from "FILE" name=COLUMN attr=COLUMN ...`: one member per row of a table.
    Table(TableDecl),
    /// `attribute NAME decimals D [unit U]`: exact decimal amounts.
    Attribute(AttributeDecl),
    /// `bloc NAME = a, b, ...`.
    Bloc(BlocDecl),
    /// `define NAME = EXPR`: a named condition for use in rules.
    Define(NamedExpr),
    /// `rule NAME = EXPR`.
    Rule(NamedExpr),
}

/// `member NAME attr=v ...`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct MemberDecl {
    /// The member's name.
    pub name: Name,
    /// Its weights.
    pub weights: Vec<Weight>,
    /// The whole declaration.
    pub span: Span,
}

/// `members NAME xK attr=v ...`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct GroupDecl {
    /// The group's name; members are named NAME1..NAMEK.
    pub name: Name,
    /// K and where it is written.
    pub count: (u64, Span),
    /// Every member's weights.
    pub weights: Vec<Weight>,
    /// The whole declaration.
    pub span: Span,
}

/// `attr=v`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Weight {
    /// The attribute.
    pub attribute: Name,
    /// The weight as written (a whole number or an exact decimal).
    pub value: Quantity,
    /// The whole assignment.
    pub span: Span,
}

/// A non-negative amount as written: `mantissa / 10^scale` exactly
/// (`1520.565494` is 1520565494 with scale 6).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub struct Quantity {
    /// The digits, without the point.
    pub mantissa: u128,
    /// How many of them are decimals.
    pub scale: u32,
    /// Where it is written.
    pub span: Span,
}

/// `members NAME from "FILE" name=COLUMN attr=COLUMN ...`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TableDecl {
    /// The bloc of all the table's members.
    pub name: Name,
    /// The file, as written between the quotes (relative to the rule file).
    pub path: (String, Span),
    /// The column that names the members (`name=COLUMN`), if given.
    pub name_column: Option<Name>,
    /// Attribute and the column that holds it, in the order written.
    pub columns: Vec<(Name, Name)>,
    /// The whole declaration.
    pub span: Span,
}

/// `attribute NAME decimals D [unit U]`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct AttributeDecl {
    /// The attribute.
    pub name: Name,
    /// Decimals of its amounts, and where written.
    pub decimals: (u64, Span),
    /// The unit weights are counted in when the exact amounts are too large.
    pub unit: Option<Quantity>,
    /// The whole declaration.
    pub span: Span,
}

/// `bloc NAME = a, b, ...`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct BlocDecl {
    /// The bloc's name.
    pub name: Name,
    /// Members, groups or other blocs.
    pub parts: Vec<Name>,
    /// The whole declaration.
    pub span: Span,
}

/// `define NAME = EXPR` or `rule NAME = EXPR`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct NamedExpr {
    /// The name.
    pub name: Name,
    /// The condition.
    pub expr: Expr,
    /// The whole declaration.
    pub span: Span,
}

/// A condition over the yes votes.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Expr {
    /// Every operand holds (`and`).
    All(Vec<Expr>, Span),
    /// Some operand holds (`or`).
    Any(Vec<Expr>, Span),
    /// `not EXPR` (parsed so that the compiler can explain why it is refused);
    /// the span is the keyword's.
    Not(Box<Expr>, Span),
    /// `SUBJECT [against] CMP AMOUNT`.
    Threshold(Threshold),
    /// `AMOUNT of BLOC`.
    OfBloc {
        /// How many (or what share) of the bloc.
        amount: Amount,
        /// The bloc.
        bloc: Name,
        /// The whole condition.
        span: Span,
    },
    /// A member, bloc, definition or rule named alone.
    Reference(Name),
}

impl Expr {
    /// Where the expression is written.
    pub fn span(&self) -> Span {
        match self {
            Expr::All(_, s) | Expr::Any(_, s) | Expr::Not(_, s) => *s,
            Expr::Threshold(t) => t.span,
            Expr::OfBloc { span, .. } => *span,
            Expr::Reference(n) => n.span,
        }
    }
}

/// What a threshold sums over the yes-voters (or the no-voters with `against`).
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Subject {
    /// `count`: the head count.
    Count(Span),
    /// An attribute or bloc.
    Name(Name),
}

impl Subject {
    /// Where it is written.
    pub fn span(&self) -> Span {
        match self {
            Subject::Count(s) => *s,
            Subject::Name(n) => n.span,
        }
    }
}

/// The comparison as written.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Comparison {
    /// `>=`
    AtLeast,
    /// `>`
    MoreThan,
    /// `<=`
    AtMost,
    /// `<`
    LessThan,
    /// `=` or `==`
    Equal,
    /// `!=`
    NotEqual,
    /// `=>` or `=<`, which the language spells `>=` and `<=`.
    Reversed,
}

/// Which members of a four-state ballot a sum runs over.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum GroupWord {
    /// `yes`: voting yes.
    Yes,
    /// `no`: voting no.
    No,
    /// `abstain`: present, voting neither way.
    Abstain,
    /// `cast`: yes + no.
    Cast,
    /// `present`: yes + no + abstain.
    Present,
}

impl GroupWord {
    /// Coefficients of the yes, no and abstain sums.
    pub fn vector(self) -> [i128; 3] {
        match self {
            GroupWord::Yes => [1, 0, 0],
            GroupWord::No => [0, 1, 0],
            GroupWord::Abstain => [0, 0, 1],
            GroupWord::Cast => [1, 1, 0],
            GroupWord::Present => [1, 1, 1],
        }
    }

    /// The word as written.
    pub fn word(self) -> &'static str {
        match self {
            GroupWord::Yes => "yes",
            GroupWord::No => "no",
            GroupWord::Abstain => "abstain",
            GroupWord::Cast => "cast",
            GroupWord::Present => "present",
        }
    }
}

/// The right-hand side of a four-state comparison, when it is not a plain amount.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum GroupSide {
    /// `AMOUNT of GROUP`: a share of another group's sum of the same attribute.
    ShareOf(GroupWord, Span),
    /// `[SUBJECT] GROUP`: another group's sum (of the same attribute).
    Sum(Option<Subject>, GroupWord, Span),
}

/// `SUBJECT [against] [GROUP] CMP AMOUNT`, or a four-state comparison.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Threshold {
    /// What is summed.
    pub subject: Subject,
    /// `Some` when the sum is over the no-voters.
    pub against: Option<Span>,
    /// The group word after the subject (`seats yes`, `count present`).
    pub group: Option<(GroupWord, Span)>,
    /// The comparison and where it is written.
    pub comparison: (Comparison, Span),
    /// The bound (for [`GroupSide::ShareOf`], the share).
    pub amount: Amount,
    /// A group on the right-hand side (`1/2 of cast`, `tokens no`).
    pub side: Option<GroupSide>,
    /// The whole condition.
    pub span: Span,
}

impl Threshold {
    /// Whether the condition is a four-state form (a group word anywhere).
    pub fn is_four_state(&self) -> bool {
        self.group.is_some() || self.side.is_some()
    }
}

/// A bound: an absolute amount or a share of the total.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Amount {
    /// The value.
    pub value: AmountValue,
    /// Where it is written.
    pub span: Span,
}

/// The value of an [`Amount`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AmountValue {
    /// An integer.
    Integer(u64),
    /// A share `numerator / denominator` (at most 1) of the total, written
    /// as a fraction or as a percentage (`62.5%` is 625/1000).
    Share {
        /// Numerator.
        numerator: u64,
        /// Denominator (non-zero).
        denominator: u64,
        /// Written with `%`.
        percent: bool,
    },
}
