//! Plans: the TOML file a person writes, read with every problem reported at
//! once ([`raw`]), and resolved against its data into a [`ResolvedPlan`]
//! whose canonical JSON hashes to the plan hash.

mod grid;
mod problem;
pub mod raw;
mod reader;
mod resolved;
mod scheme;

pub use grid::{label, range_values};
pub use problem::{Place, PlanError, Problem};
pub use resolved::{
    CandidateSpec, DataSection, FORMAT, PlanSection, ResolveError, Resolved, ResolvedPlan,
    SelectSection, resolve, resolve_file,
};
