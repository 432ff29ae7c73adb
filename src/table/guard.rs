//! The output guard: before a command writes anything, every output path (and the
//! `.provenance.json` sidecar a CSV/TSV output gets) is compared with every input and with
//! every other output, after resolving links (and, where both files exist, by device and
//! inode, so hard links are caught too). A clash is refused with both options named.
//!
//! Also here: all-or-nothing commits. While [`begin_deferred_commit`] is in force,
//! [`put_in_place`] (the last step of every atomic write in this crate) does not rename a
//! finished temporary file over its target but records it; [`commit_deferred`] renames them
//! all once the command has succeeded, [`discard_deferred`] removes them after a failure, so
//! a command that fails half-way leaves no output of this run behind.

use std::path::{Component, Path, PathBuf};
use std::sync::Mutex;

use super::error::TableError;
use super::write::sidecar_path;

/// One path named on the command line, with the option that named it (e.g. `--output`).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct NamedPath {
    /// The option, as the user typed it (`--summary`, `--sites-file`, …).
    pub option: String,
    /// The path given.
    pub path: PathBuf,
}

impl NamedPath {
    /// A path with the option that named it.
    pub fn new(option: impl Into<String>, path: impl Into<PathBuf>) -> NamedPath {
        NamedPath { option: option.into(), path: path.into() }
    }
}

/// The path with links resolved as far as the file system allows: the whole path when it
/// exists, else its folder (resolved) joined with the file name, else the path made absolute
/// and cleaned of `.` and `..` by text.
pub fn resolved(path: &Path) -> PathBuf {
    if let Ok(p) = std::fs::canonicalize(path) {
        return p;
    }
    let absolute = if path.is_absolute() {
        path.to_path_buf()
    } else {
        std::env::current_dir().map(|d| d.join(path)).unwrap_or_else(|_| path.to_path_buf())
    };
    if let (Some(parent), Some(name)) = (absolute.parent(), absolute.file_name())
        && let Ok(p) = std::fs::canonicalize(parent)
    {
        return p.join(name);
    }
    let mut clean = PathBuf::new();
    for c in absolute.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir => {
                clean.pop();
            }
            other => clean.push(other.as_os_str()),
        }
    }
    clean
}

/// Whether `a` and `b` name the same file: equal after [`resolved`], or (both existing) the
/// same device and inode.
pub fn same_file(a: &Path, b: &Path) -> bool {
    if resolved(a) == resolved(b) {
        return true;
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        if let (Ok(ma), Ok(mb)) = (std::fs::metadata(a), std::fs::metadata(b)) {
            return ma.dev() == mb.dev() && ma.ino() == mb.ino();
        }
    }
    false
}

/// Whether an output at `path` gets a `.provenance.json` sidecar (CSV/TSV tables do).
fn has_sidecar(path: &Path) -> bool {
    matches!(
        path.extension().and_then(|e| e.to_str()).map(str::to_ascii_lowercase).as_deref(),
        Some("csv" | "tsv" | "tab" | "txt")
    )
}

/// Refuses the outputs of a command if any of them, or any sidecar, names the same file as
/// an input or as another output. The message names both options and both paths.
pub fn check_outputs(inputs: &[NamedPath], outputs: &[NamedPath]) -> Result<(), TableError> {
    let mut written: Vec<(String, PathBuf)> = Vec::new();
    for o in outputs {
        written.push((o.option.clone(), o.path.clone()));
        if has_sidecar(&o.path) {
            written.push((format!("{} (its provenance sidecar)", o.option), sidecar_path(&o.path)));
        }
    }
    for (option, path) in &written {
        if let Some(i) = inputs.iter().find(|i| same_file(path, &i.path)) {
            return Err(TableError::OutputOverInput {
                output_option: option.clone(),
                output: path.display().to_string(),
                input_option: i.option.clone(),
                input: i.path.display().to_string(),
            });
        }
    }
    for (k, (option, path)) in written.iter().enumerate() {
        if let Some((other_option, other)) = written[k + 1..].iter().find(|(_, p)| same_file(path, p)) {
            return Err(TableError::OutputsClash {
                output_option: option.clone(),
                output: path.display().to_string(),
                other_option: other_option.clone(),
                other: other.display().to_string(),
            });
        }
    }
    Ok(())
}

/// Finished temporary files waiting for their rename, while a deferred commit is in force.
static DEFERRED: Mutex<Option<Vec<(PathBuf, PathBuf)>>> = Mutex::new(None);

fn deferred() -> std::sync::MutexGuard<'static, Option<Vec<(PathBuf, PathBuf)>>> {
    DEFERRED.lock().unwrap_or_else(|poisoned| poisoned.into_inner())
}

/// From now on, finished outputs wait for [`commit_deferred`] instead of replacing their
/// targets at once. For a program that runs one command per process.
pub fn begin_deferred_commit() {
    *deferred() = Some(Vec::new());
}

/// Moves the finished temporary file `tmp` onto `target` (rename in the same folder), or,
/// while a deferred commit is in force, records the pair for [`commit_deferred`].
pub fn put_in_place(tmp: &Path, target: &Path) -> std::io::Result<()> {
    let mut guard = deferred();
    match guard.as_mut() {
        Some(list) => {
            list.retain(|(_, t)| t != target);
            list.push((tmp.to_path_buf(), target.to_path_buf()));
            Ok(())
        }
        None => std::fs::rename(tmp, target),
    }
}

/// Renames every recorded temporary file onto its target and ends the deferred commit.
/// Should one rename fail, the temporaries not yet moved are removed and the error names
/// the target.
pub fn commit_deferred() -> Result<(), TableError> {
    let list = deferred().take().unwrap_or_default();
    let mut failure = None;
    for (tmp, target) in list {
        if failure.is_some() {
            let _ = std::fs::remove_file(&tmp);
            continue;
        }
        if let Err(e) = std::fs::rename(&tmp, &target) {
            let _ = std::fs::remove_file(&tmp);
            failure = Some(TableError::File {
                file: target.display().to_string(),
                message: format!("cannot move the finished file into place: {e}"),
            });
        }
    }
    failure.map_or(Ok(()), Err)
}

/// Removes every recorded temporary file (the command failed) and ends the deferred commit;
/// returns how many finished outputs were dropped.
pub fn discard_deferred() -> usize {
    let list = deferred().take().unwrap_or_default();
    for (tmp, _) in &list {
        let _ = std::fs::remove_file(tmp);
    }
    list.len()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn folder(name: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("skyclock-guard-{name}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(&d).unwrap();
        d
    }

    #[test]
    fn an_output_over_an_input_through_a_link_or_dots_is_refused() {
        // Common practice: a tool must not replace its own input, whatever spelling names it.
        let d = folder("link");
        let input = d.join("sites.toml");
        std::fs::write(&input, "x").unwrap();
        let link = d.join("alias.toml");
        std::os::unix::fs::symlink(&input, &link).unwrap();
        let inputs = [NamedPath::new("--sites-file", &input)];
        for out in [link.clone(), d.join("sub/../sites.toml"), d.join("./sites.toml")] {
            std::fs::create_dir_all(d.join("sub")).unwrap();
            let err = check_outputs(&inputs, &[NamedPath::new("--summary", &out)]).unwrap_err().to_string();
            assert!(err.contains("--summary") && err.contains("--sites-file"), "{err}");
        }
        let hard = d.join("hard.toml");
        std::fs::hard_link(&input, &hard).unwrap();
        assert!(check_outputs(&inputs, &[NamedPath::new("--output", &hard)]).is_err());
        assert!(check_outputs(&inputs, &[NamedPath::new("--output", d.join("new.csv"))]).is_ok());
        let _ = std::fs::remove_dir_all(&d);
    }

    #[test]
    fn two_outputs_on_one_path_and_a_sidecar_clash_are_refused() {
        let d = folder("pair");
        let a = NamedPath::new("--output", d.join("t.csv"));
        let b = NamedPath::new("--summary", d.join("t.csv"));
        let err = check_outputs(&[], &[a.clone(), b]).unwrap_err().to_string();
        assert!(err.contains("--output") && err.contains("--summary"), "{err}");
        let side = NamedPath::new("--summary", d.join("t.csv.provenance.json"));
        let err = check_outputs(&[], &[a.clone(), side]).unwrap_err().to_string();
        assert!(err.contains("sidecar"), "{err}");
        let ok = NamedPath::new("--summary", d.join("t.json"));
        assert!(check_outputs(&[], &[a, ok]).is_ok());
        let _ = std::fs::remove_dir_all(&d);
    }
}
