//! Resampling: the sealed partition and the splits of the development
//! partition, as explicit row sets.
//!
//! Invariants: splits depend only on the data's steering columns (class,
//! group, order) of the rows being split, the scheme and the seed, never on
//! candidates; each purpose draws from its own seeded [`Stream`] (`seal`,
//! `resample/kfold/<repeat>`, `resample/monte-carlo/<draw>`,
//! `resample/bootstrap/<draw>`, and `resample/inner/<outer>/...` inside
//! nested); with a group column no group is on both sides of any split,
//! except by design in forward-chaining and the seal by order, which cut by
//! time; row indices are 0-based file rows and every row set is sorted
//! ascending (a bootstrap training part may repeat an index).

mod apportion;
mod bootstrap;
mod forward;
mod kfold;
mod leave_out;
mod monte_carlo;
mod place;
mod scheme;
mod seal;
mod split;
mod stream;
mod units;

#[cfg(test)]
mod tests;

pub use bootstrap::MAX_ATTEMPTS;
pub use place::deal;
pub use scheme::{Scheme, Size, Window, splits};
pub use seal::{Partition, SealSpec, seal};
pub use split::{ResampleError, Role, RowFacts, Split, class_counts};
pub use stream::Stream;
