//! The job sheet: splits, candidates and jobs, content-hashed. (Being built.)
