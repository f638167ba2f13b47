//! Running a job sheet. (Being built.)
