//! Who recorded an entry, where, with which holdfast, from which plan.
//!
//! Gathering never fails: a missing variable becomes `"unknown"`, a missing
//! git or a plan outside any git work tree leaves the git fields `None`.
//! The git commit is the work tree's `HEAD` (`git rev-parse HEAD`), not the
//! last commit that touched the plan: `HEAD` names the whole tree the run
//! happened in (code, helper files, data if tracked), and the plan as run
//! is `git show <commit>:<plan>` whenever `git_dirty` is `false`. The dirty
//! flag is `git status --porcelain -- <plan>`: any output (a modified,
//! staged or untracked plan) means the committed plan is not the one run.

use std::ffi::OsStr;
use std::path::Path;
use std::process::{Command, Stdio};

use serde::{Deserialize, Serialize};

/// Where an entry came from. Part of every entry's hash.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Provenance {
    pub user: String,
    pub host: String,
    pub tool_version: String,
    /// The plan path as given on the command line.
    pub plan_path: String,
    /// `HEAD` of the git work tree holding the plan.
    pub git_commit: Option<String>,
    /// Whether the plan differs from its committed version (or is untracked).
    pub git_dirty: Option<bool>,
}

impl Provenance {
    /// Collect the provenance of a run of `plan` by holdfast `tool_version`.
    pub fn gather(plan: &Path, tool_version: &str) -> Provenance {
        let user = non_empty_var("USER")
            .or_else(|| non_empty_var("LOGNAME"))
            .unwrap_or_else(unknown);
        let (git_commit, git_dirty) = git_state(plan);
        Provenance {
            user,
            host: host_name(),
            tool_version: tool_version.to_string(),
            plan_path: plan.display().to_string(),
            git_commit,
            git_dirty,
        }
    }
}

fn unknown() -> String {
    "unknown".to_string()
}

fn non_empty_var(name: &str) -> Option<String> {
    std::env::var(name)
        .ok()
        .map(|v| v.trim().to_string())
        .filter(|v| !v.is_empty())
}

fn host_name() -> String {
    std::fs::read_to_string("/proc/sys/kernel/hostname")
        .ok()
        .map(|v| v.trim().to_string())
        .filter(|v| !v.is_empty())
        .or_else(|| non_empty_var("HOSTNAME"))
        .unwrap_or_else(unknown)
}

/// `(commit, dirty)` of the plan, both `None` outside a git work tree, in a
/// repository without commits, or when git cannot be run.
fn git_state(plan: &Path) -> (Option<String>, Option<bool>) {
    let folder = match plan.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    let Some(file) = plan.file_name() else {
        return (None, None);
    };
    let commit = git(folder, &[OsStr::new("rev-parse"), OsStr::new("HEAD")])
        .map(|out| out.trim().to_string())
        .filter(|c| c.len() >= 40 && c.bytes().all(|b| b.is_ascii_hexdigit()));
    let Some(commit) = commit else {
        return (None, None);
    };
    let status = [
        OsStr::new("status"),
        OsStr::new("--porcelain"),
        OsStr::new("--"),
        file,
    ];
    let dirty = git(folder, &status).map(|out| !out.trim().is_empty());
    (Some(commit), dirty)
}

/// Run git in `folder`; `None` unless it ran and succeeded.
fn git(folder: &Path, args: &[&OsStr]) -> Option<String> {
    let output = Command::new("git")
        .arg("-C")
        .arg(folder)
        .args(args)
        // Keep `git status` from rewriting the index: gathering provenance
        // must not change the work tree (common practice for tools that
        // only look).
        .env("GIT_OPTIONAL_LOCKS", "0")
        .stdin(Stdio::null())
        .stderr(Stdio::null())
        .output()
        .ok()?;
    if !output.status.success() {
        return None;
    }
    String::from_utf8(output.stdout).ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn git_available() -> bool {
        Command::new("git").arg("--version").output().is_ok()
    }

    fn run_git(folder: &Path, args: &[&str]) -> String {
        let out = Command::new("git")
            .arg("-C")
            .arg(folder)
            .args(["-c", "user.name=t", "-c", "user.email=t@example.org"])
            .args(args)
            .output()
            .unwrap();
        assert!(out.status.success(), "git {args:?} failed");
        String::from_utf8(out.stdout).unwrap()
    }

    #[test]
    fn outside_git_the_git_fields_are_none() {
        let dir = tempfile::tempdir().unwrap();
        if dir.path().ancestors().any(|a| a.join(".git").exists()) {
            eprintln!("skipped: the temporary folder lies inside a git work tree");
            return;
        }
        let plan = dir.path().join("plan.toml");
        std::fs::write(&plan, "x").unwrap();
        let prov = Provenance::gather(&plan, "9.9.9");
        assert_eq!((prov.git_commit, prov.git_dirty), (None, None));
        assert_eq!(prov.tool_version, "9.9.9");
        assert!(!prov.user.is_empty() && !prov.host.is_empty());
    }

    #[test]
    fn inside_git_commit_and_dirty_flag_follow_the_plan() {
        if !git_available() {
            eprintln!("skipped: git is not installed");
            return;
        }
        let dir = tempfile::tempdir().unwrap();
        let root = dir.path();
        run_git(root, &["init", "-q"]);
        std::fs::create_dir(root.join("plans")).unwrap();
        let plan = root.join("plans/plan.toml");
        std::fs::write(&plan, "a = 1\n").unwrap();
        let untracked = Provenance::gather(&plan, "0");
        assert_eq!(untracked.git_commit, None, "no commit yet");
        run_git(root, &["add", "."]);
        run_git(root, &["commit", "-q", "-m", "plan"]);
        let head = run_git(root, &["log", "-1", "--format=%H"]);
        let clean = Provenance::gather(&plan, "0");
        assert_eq!(clean.git_commit.as_deref(), Some(head.trim()));
        assert_eq!(clean.git_dirty, Some(false));
        std::fs::write(&plan, "a = 2\n").unwrap();
        assert_eq!(Provenance::gather(&plan, "0").git_dirty, Some(true));
        std::fs::write(root.join("plans/other.toml"), "b").unwrap();
        std::fs::write(&plan, "a = 1\n").unwrap();
        assert_eq!(
            Provenance::gather(&plan, "0").git_dirty,
            Some(false),
            "another file's changes do not make the plan dirty"
        );
    }
}
