//! The demo: an invented wind-turbine fleet, generated from a seed.
//! (Being built.)
