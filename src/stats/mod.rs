//! Statistics: intervals, comparison tests, selection rules and bias
//! corrections, each from its published source. (Being built.)
