//! Resampling: the sealed partition and the splits of the development
//! partition, as explicit row sets.
//!
//! Invariants: splits depend only on the data's steering columns (class,
//! group, order), the scheme and the seed, never on candidates; each purpose
//! draws from its own seeded [`Stream`]; with a group column no group is on
//! both sides of any split; row indices are 0-based file rows and every row
//! set is sorted ascending (a bootstrap training part may repeat an index).

mod scheme;
mod seal;
mod split;
mod stream;

pub use scheme::{Scheme, Size, Window, splits};
pub use seal::{Partition, SealSpec, seal};
pub use split::{ResampleError, Role, RowFacts, Split};
pub use stream::Stream;
