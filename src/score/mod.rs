//! Metrics: how well predictions match the truth on one part.

mod metric;

pub use metric::{Metric, ScoreError, Truth, score, score_against, score_many};
