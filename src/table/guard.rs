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
//!
//! And the temporaries themselves: every temporary file a run writes is named
//! `.<name>.<pid>.partial[.<ext>]` beside its target ([`temporary_path`]) and recorded while
//! it exists ([`create_temporary`], [`claim_temporary`], [`release_temporary`]). An
//! interrupted run (the program's SIGINT/SIGTERM/SIGHUP handler) removes them all with
//! [`abandon_run`]; a run killed outright (SIGKILL cannot be caught) leaves them, and the next
//! run that writes the same output removes those whose process is gone
//! ([`remove_stale_temporaries`]).

use std::fs::File;
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
        None => {
            drop(guard);
            let moved = std::fs::rename(tmp, target);
            release_temporary(tmp);
            moved
        }
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
            release_temporary(&tmp);
            continue;
        }
        let moved = std::fs::rename(&tmp, &target);
        release_temporary(&tmp);
        if let Err(e) = moved {
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
        release_temporary(tmp);
    }
    list.len()
}

/// Temporary files of this run that exist (or are about to), and whether the run has been
/// abandoned (no new temporary may be created then).
struct Owned {
    paths: Vec<PathBuf>,
    abandoned: bool,
}

static OWNED: Mutex<Owned> = Mutex::new(Owned { paths: Vec::new(), abandoned: false });

fn owned() -> std::sync::MutexGuard<'static, Owned> {
    OWNED.lock().unwrap_or_else(|poisoned| poisoned.into_inner())
}

/// The temporary file used while writing `target`: `.<name>.<pid>.partial` in the same
/// folder, with `.<suffix>` appended when `suffix` is not empty (a figure keeps its
/// extension, which selects the image format).
pub fn temporary_path(target: &Path, suffix: &str) -> PathBuf {
    let name = target.file_name().map(|n| n.to_string_lossy().to_string()).unwrap_or_default();
    let tail = if suffix.is_empty() { String::new() } else { format!(".{suffix}") };
    target.with_file_name(format!(".{name}.{}.partial{tail}", std::process::id()))
}

/// Whether process `pid` is running. Linux: `/proc/<pid>` exists. Elsewhere the answer is
/// always yes, so that no file of a live run is ever removed.
fn process_is_running(pid: u32) -> bool {
    let proc_root = Path::new("/proc/self");
    if !proc_root.exists() {
        return true;
    }
    Path::new("/proc").join(pid.to_string()).exists()
}

/// The process id in the name of a temporary file of `target` (`.<name>.<pid>.partial` or
/// `.<name>.<pid>.partial.<ext>`), if `file_name` is one.
fn temporary_owner(file_name: &str, target_name: &str) -> Option<u32> {
    let rest = file_name.strip_prefix('.')?.strip_prefix(target_name)?.strip_prefix('.')?;
    let (pid, tail) = rest.split_once('.')?;
    if !(tail == "partial" || tail.strip_prefix("partial.").is_some_and(|ext| !ext.contains('.'))) {
        return None;
    }
    if pid.is_empty() || !pid.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    pid.parse().ok()
}

/// Removes the temporary files of `target` left by runs that are no longer running (a run
/// killed with SIGKILL cannot remove its own); returns how many were removed. Files of this
/// process and of live processes are kept.
pub fn remove_stale_temporaries(target: &Path) -> usize {
    let Some(name) = target.file_name().map(|n| n.to_string_lossy().to_string()) else {
        return 0;
    };
    let folder = match target.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let Ok(entries) = std::fs::read_dir(&folder) else {
        return 0;
    };
    let own = std::process::id();
    let mut removed = 0;
    for entry in entries.flatten() {
        let file_name = entry.file_name().to_string_lossy().to_string();
        let Some(pid) = temporary_owner(&file_name, &name) else {
            continue;
        };
        if pid != own && !process_is_running(pid) && std::fs::remove_file(entry.path()).is_ok() {
            removed += 1;
        }
    }
    removed
}

/// Creates (truncating) the temporary file for `target` and records it as owned by this
/// run, after removing stale temporaries of `target` left by runs that are gone. Refused
/// once the run has been abandoned (an interrupt is being handled).
pub fn create_temporary(target: &Path, suffix: &str) -> std::io::Result<(PathBuf, File)> {
    let tmp = temporary_path(target, suffix);
    remove_stale_temporaries(target);
    let mut owned = owned();
    if owned.abandoned {
        return Err(std::io::Error::other("the run was interrupted"));
    }
    let file = File::create(&tmp)?;
    owned.paths.push(tmp.clone());
    Ok((tmp, file))
}

/// Records `tmp` as a temporary of this run that another writer (e.g. an image encoder)
/// will create, after removing stale temporaries of `target`.
pub fn claim_temporary(tmp: &Path, target: &Path) -> std::io::Result<()> {
    remove_stale_temporaries(target);
    let mut owned = owned();
    if owned.abandoned {
        return Err(std::io::Error::other("the run was interrupted"));
    }
    owned.paths.push(tmp.to_path_buf());
    Ok(())
}

/// Forgets `tmp` (it was renamed into place or removed).
pub fn release_temporary(tmp: &Path) {
    owned().paths.retain(|p| p != tmp);
}

/// The temporary files this run owns now (unfinished or waiting for the commit).
pub fn owned_temporaries() -> Vec<PathBuf> {
    owned().paths.clone()
}

/// Ends the run's writing for good (an interrupt): removes every temporary file it owns,
/// finished or not, and refuses any new one; returns how many files were removed. Meant to
/// be followed at once by the end of the process: writers that were in the middle of a file
/// keep writing into a removed file and cannot put it in place.
pub fn abandon_run() -> usize {
    let mut owned = owned();
    owned.abandoned = true;
    let mut removed = 0;
    for p in owned.paths.drain(..) {
        if std::fs::remove_file(&p).is_ok() {
            removed += 1;
        }
    }
    drop(owned);
    if let Some(list) = deferred().as_mut() {
        list.clear();
    }
    removed
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
    fn temporary_names_are_told_from_other_files() {
        assert_eq!(temporary_owner(".out.csv.123.partial", "out.csv"), Some(123));
        assert_eq!(temporary_owner(".fig.png.77.partial.png", "fig.png"), Some(77));
        for other in [".out.csv.partial", ".out.csv.12a.partial", "out.csv.12.partial", ".out.csv.12.partial.a.b"] {
            assert_eq!(temporary_owner(other, "out.csv"), None, "{other}");
        }
        assert_eq!(temporary_owner(".other.csv.12.partial", "out.csv"), None);
    }

    #[test]
    fn stale_temporaries_of_dead_runs_are_removed_and_live_ones_kept() {
        let d = folder("stale");
        let target = d.join("out.csv");
        // A pid above the kernel's pid_max (4194304 at most on Linux) is never running.
        let dead = d.join(".out.csv.4294967295.partial");
        let mine = temporary_path(&target, "");
        let unrelated = d.join(".notes.txt.4294967295.partial");
        for p in [&dead, &mine, &unrelated] {
            std::fs::write(p, "x").unwrap();
        }
        assert_eq!(remove_stale_temporaries(&target), 1);
        assert!(!dead.exists() && mine.exists() && unrelated.exists());
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
