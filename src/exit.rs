//! Exit codes of the `holdfast` binary. They are part of the interface:
//! scripts and CI jobs branch on them, and the integration tests assert them.

/// Everything worked.
pub const SUCCESS: u8 = 0;
/// A bug in holdfast: an internal error that the user could not have caused.
pub const INTERNAL: u8 = 1;
/// A user's mistake or bad input: a plan, a data file, an argument, a ledger path.
pub const USER: u8 = 2;
/// An integrity failure: a ledger whose hash chain does not verify, or a
/// replay whose recomputed result differs from the recorded one.
pub const INTEGRITY: u8 = 3;
