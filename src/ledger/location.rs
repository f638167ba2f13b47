//! Where the ledger file lives.
//!
//! Precedence: the `--ledger` flag, then the `HOLDFAST_LEDGER` environment
//! variable (an empty value counts as unset), then
//! `ledger/holdfast.sqlite` at the root of the git work tree holding the
//! plan, or beside the plan when it is in none. Without a plan (read-only
//! commands such as `holdfast log`) the current folder stands in for the
//! plan's folder. A git work tree is found by walking up the folders looking
//! for `.git`, a folder in a plain clone or a file in a linked work tree or
//! submodule. The environment and the current folder are parameters of
//! [`resolve_path_in`] so that tests can fix them.

use std::ffi::OsString;
use std::path::{Path, PathBuf};

/// The environment variable naming the ledger file.
pub const LEDGER_VAR: &str = "HOLDFAST_LEDGER";

/// The ledger's path below the folder that holds it.
pub const LEDGER_FILE: &str = "ledger/holdfast.sqlite";

/// The default ledger of `plan`: at its git root, else beside it.
pub fn default_path(plan: &Path) -> PathBuf {
    let folder = match plan.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    default_for_folder(&absolute(&folder))
}

/// The ledger path chosen by `flag`, the value of `HOLDFAST_LEDGER` (`env`,
/// as read by [`ledger_var`]) and the plan, in that order, relative to the
/// current folder.
pub fn resolve_path(flag: Option<&Path>, env: Option<OsString>, plan: Option<&Path>) -> PathBuf {
    let here = std::env::current_dir().unwrap_or_else(|_| PathBuf::from("."));
    resolve_path_in(flag, env, plan, &here)
}

/// [`resolve_path`] with the current folder given.
pub fn resolve_path_in(
    flag: Option<&Path>,
    env: Option<OsString>,
    plan: Option<&Path>,
    here: &Path,
) -> PathBuf {
    if let Some(flag) = flag {
        return flag.to_path_buf();
    }
    if let Some(env) = env.filter(|v| !v.is_empty()) {
        return PathBuf::from(env);
    }
    match plan {
        Some(plan) if plan.is_absolute() => default_path(plan),
        Some(plan) => default_path(&here.join(plan)),
        None => default_for_folder(here),
    }
}

/// The value of `HOLDFAST_LEDGER` in this process's environment.
pub fn ledger_var() -> Option<OsString> {
    std::env::var_os(LEDGER_VAR)
}

/// The root of the git work tree holding `folder`, if any.
pub fn git_root(folder: &Path) -> Option<PathBuf> {
    folder
        .ancestors()
        .find(|dir| dir.join(".git").exists())
        .map(Path::to_path_buf)
}

fn default_for_folder(folder: &Path) -> PathBuf {
    git_root(folder)
        .unwrap_or_else(|| folder.to_path_buf())
        .join(LEDGER_FILE)
}

/// `path` made absolute without touching symbolic links, so that the walk up
/// to the git root sees every parent; left as is when that fails.
fn absolute(path: &Path) -> PathBuf {
    std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf())
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::fs;

    /// A temporary folder that is not inside any git work tree, or `None`
    /// (and a note) when the machine's temporary folder is in one.
    fn outside_git() -> Option<tempfile::TempDir> {
        let dir = tempfile::tempdir().unwrap();
        if git_root(dir.path()).is_some() {
            eprintln!("skipped: the temporary folder lies inside a git work tree");
            return None;
        }
        Some(dir)
    }

    #[test]
    fn default_path_uses_the_git_root_folder_or_file() {
        let Some(dir) = outside_git() else { return };
        let root = dir.path();
        fs::create_dir_all(root.join("repo/.git")).unwrap();
        fs::create_dir_all(root.join("linked/plans/deep")).unwrap();
        fs::write(root.join("linked/.git"), "gitdir: elsewhere\n").unwrap();
        fs::create_dir_all(root.join("repo/plans")).unwrap();
        let cases = [
            ("repo/plans/p.toml", "repo/ledger/holdfast.sqlite"),
            ("repo/p.toml", "repo/ledger/holdfast.sqlite"),
            ("linked/plans/deep/p.toml", "linked/ledger/holdfast.sqlite"),
        ];
        for (plan, want) in cases {
            assert_eq!(default_path(&root.join(plan)), root.join(want), "{plan}");
        }
    }

    #[test]
    fn default_path_outside_git_is_beside_the_plan() {
        let Some(dir) = outside_git() else { return };
        let plan = dir.path().join("plans/p.toml");
        assert_eq!(
            default_path(&plan),
            dir.path().join("plans/ledger/holdfast.sqlite")
        );
    }

    #[test]
    fn resolve_follows_flag_then_env_then_plan_then_folder() {
        let Some(dir) = outside_git() else { return };
        let here = dir.path();
        fs::create_dir_all(here.join("repo/.git")).unwrap();
        let flag = Path::new("/f/l.sqlite");
        let env = || Some(OsString::from("/e/l.sqlite"));
        let plan = Path::new("repo/plans/p.toml");
        let in_here = |f, e, p| resolve_path_in(f, e, p, here);
        assert_eq!(in_here(Some(flag), env(), Some(plan)), flag);
        assert_eq!(in_here(None, env(), Some(plan)), Path::new("/e/l.sqlite"));
        let by_plan = here.join("repo/ledger/holdfast.sqlite");
        assert_eq!(in_here(None, None, Some(plan)), by_plan);
        assert_eq!(in_here(None, Some(OsString::new()), Some(plan)), by_plan);
        assert_eq!(in_here(None, None, None), here.join(LEDGER_FILE));
        let inside = here.join("repo/plans");
        assert_eq!(resolve_path_in(None, None, None, &inside), by_plan);
    }
}
