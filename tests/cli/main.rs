//! Integration tests: the real `holdfast` binary against fixtures in temp
//! dirs, checking exit codes, stdout, stderr and files written.

mod support;

mod data_errors;
mod examples;
mod ledger_flow;
mod plan_check;
mod report;
mod resume;
mod schemes;
mod tamper;
