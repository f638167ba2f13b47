//! Metrics: how well predictions match the truth on one part.

mod metric;

pub use metric::{Metric, ScoreError, score, score_many};
