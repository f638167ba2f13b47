//! Integration tests: the real `holdfast` binary against fixtures in temp
//! dirs, checking exit codes, stdout, stderr and files written.

mod support;

mod plan_check;
