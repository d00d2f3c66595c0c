//! The names of the counting engines.
//!
//! [`Engine`] is only an identifier: errors ([`crate::Error::EngineUnsuitable`]),
//! counts and plans say which engine they concern. What an engine does, when
//! it applies and what it costs are answered by the engine itself through
//! the registry in [`crate::engine`], which also defines [`Engine::ALL`] and
//! [`Engine::describe`]. O(1), no heap, no arithmetic.

/// A counting engine.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum Engine {
    /// Visit every coalition in Gray-code order: the oracle.
    Enumerate,
    /// Visit every profile of member types (how many of each type vote yes),
    /// weighting each by its binomial multiplicity.
    Profile,
    /// Generating functions over capped partial sums (dynamic programming).
    Dense,
    /// Quasi-reduced ordered decision diagrams (feature `alloc`): exact for
    /// huge weights.
    Diagram,
}

impl Engine {
    /// Short lowercase name.
    pub fn name(self) -> &'static str {
        match self {
            Engine::Enumerate => "enumerate",
            Engine::Profile => "profile",
            Engine::Dense => "dense",
            Engine::Diagram => "diagram",
        }
    }
}
