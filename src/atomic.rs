//! Outputs that appear whole or not at all, and never over something the
//! run did not expect to replace.
//!
//! A command writes into a temporary sibling of its output (a directory
//! or a file) and moves it into place at the end, so a failed or
//! interrupted run leaves any previous output untouched and nothing
//! half-written. A temporary left by a killed process is named
//! `.NAME.partial-*` beside the output and can be deleted.
//!
//! # The commit rule
//!
//! [`AtomicDir::create`] and [`AtomicFile::create`] note what is at the
//! output's path when the run starts: nothing, or (an empty directory, or
//! with `--force` anything) an entry whose identity, size and
//! modification time, and for a directory those of everything inside it,
//! are recorded. The final step places the result only if the path still
//! holds exactly that:
//!
//! - nothing at the start: the result is moved in with a rename that
//!   never replaces (Linux `renameat2` with `RENAME_NOREPLACE`; elsewhere
//!   a hard link for files and a check just before the rename for
//!   directories). If anything appeared meanwhile (another run's result,
//!   a directory a user made, even an empty one), it is left as it is.
//! - something at the start: the result and the old output swap places
//!   in one step (Linux `RENAME_EXCHANGE`; elsewhere the old one moves
//!   aside first), and the old one is deleted only if it is unchanged
//!   since the start. If it changed (files added or edited inside,
//!   replaced by another run), the swap is undone.
//!
//! When the result cannot be placed it is kept complete under the sibling
//! `NAME.new` (or `NAME.new-2`, …) and the error says so; the exit code
//! is then 2. Of two runs to one output, the first to finish wins and the
//! other says where its result went. The check and the rename are one
//! system call for an output that did not exist, and a few microseconds
//! apart for a replaced one.
//!
//! Files are created with mode `0o666` less the umask, as any new file
//! (a replaced output does not keep the old file's mode); directories
//! with `0o777` less the umask.

use std::io::ErrorKind;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use anyhow::{bail, Context, Result};

/// A temporary directory that becomes `target` on [`AtomicDir::commit`]
/// and is removed if dropped before.
pub struct AtomicDir {
    target: PathBuf,
    start: Snapshot,
    temp: tempfile::TempDir,
    _pending: crate::interrupt::Registration,
}

impl AtomicDir {
    /// Prepares to write `target`. An existing non-empty directory is
    /// refused unless `force`; an existing file is always refused.
    pub fn create(target: &Path, force: bool) -> Result<AtomicDir> {
        match std::fs::metadata(target) {
            Ok(meta) if !meta.is_dir() => {
                bail!("{}: exists and is not a directory", target.display())
            }
            Ok(_) => {
                let mut entries = std::fs::read_dir(target)
                    .with_context(|| target.display().to_string())?;
                if entries.next().is_some() && !force {
                    bail!(
                        "{}: directory exists and is not empty (use --force \
                         to replace it)",
                        target.display()
                    );
                }
            }
            Err(_) => {}
        }
        let (name, parent) = split(target, "directory")?;
        let start = Snapshot::take(target)
            .with_context(|| target.display().to_string())?;
        let temp = tempfile::Builder::new()
            .prefix(&format!(".{name}.partial-"))
            .tempdir_in(&parent)
            .with_context(|| {
                format!("{}: cannot create a directory here", parent.display())
            })?;
        let _pending = crate::interrupt::register(temp.path());
        Ok(AtomicDir { target: target.to_path_buf(), start, temp, _pending })
    }

    /// Where to write the files.
    pub fn path(&self) -> &Path {
        self.temp.path()
    }

    /// The directory the output will have.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Runs `write` on the temporary directory. Its errors name files as
    /// the user will know them, under the target, not under the
    /// temporary name (`out/merges.tsv: No space left on device`).
    pub fn fill<T>(
        &self,
        write: impl FnOnce(&Path) -> Result<T>,
    ) -> Result<T> {
        write(self.path()).map_err(|e| {
            let text = format!("{e:#}");
            let temp = self.path().display().to_string();
            anyhow::anyhow!(
                text.replace(&temp, &self.target.display().to_string())
            )
        })
    }

    /// Writes the file `name` in the directory, naming it on failure.
    pub fn write_file(
        &self,
        name: &str,
        bytes: impl AsRef<[u8]>,
    ) -> Result<()> {
        std::fs::write(self.path().join(name), bytes)
            .with_context(|| self.target.join(name).display().to_string())
    }

    /// Moves the written directory into place under the commit rule (see
    /// the module docs).
    pub fn commit(self) -> Result<()> {
        self.commit_with(Renames::SYSTEM)
    }

    fn commit_with(self, renames: Renames) -> Result<()> {
        let AtomicDir { target, start, temp, _pending } = self;
        wait_at_gate(&target);
        let _hold = crate::interrupt::hold();
        let temp = temp.keep();
        let result = place(&temp, &target, &start, renames);
        finish(result, &temp, &target)
    }
}

/// A file that appears whole or not at all: written to a temporary file
/// beside its target and moved onto it by [`AtomicFile::commit`] under
/// the commit rule (see the module docs).
pub struct AtomicFile {
    target: PathBuf,
    start: Snapshot,
    /// A second handle on `temp`'s file: its errors are the operating
    /// system's plain ones, which [`Named`] turns into the target's.
    /// Declared first so that it is dropped (and flushed) before the
    /// file is removed.
    writer: Named<std::io::BufWriter<std::fs::File>>,
    /// Removed on drop unless persisted.
    temp: tempfile::NamedTempFile,
    _pending: crate::interrupt::Registration,
}

/// Standard output, buffered, its errors naming it
/// (`standard output: No space left on device (os error 28)`).
pub fn standard_output() -> impl std::io::Write {
    std::io::BufWriter::new(Named {
        inner: std::io::stdout().lock(),
        target: PathBuf::from("standard output"),
    })
}

/// A writer whose errors name the file the user asked for (not the
/// temporary one): `TARGET: No space left on device (os error 28)`.
struct Named<W> {
    inner: W,
    target: PathBuf,
}

impl<W> Named<W> {
    fn name(&self, e: std::io::Error) -> std::io::Error {
        std::io::Error::new(e.kind(), named(&self.target, &e))
    }
}

/// `PATH: the error`.
fn named(path: &Path, e: &std::io::Error) -> String {
    format!("{}: {e}", path.display())
}

impl<W: std::io::Write> std::io::Write for Named<W> {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.inner.write(buf).map_err(|e| self.name(e))
    }

    fn flush(&mut self) -> std::io::Result<()> {
        self.inner.flush().map_err(|e| self.name(e))
    }
}

impl AtomicFile {
    /// Prepares to write `target`; an existing file is refused unless
    /// `force`.
    pub fn create(target: &Path, force: bool) -> Result<AtomicFile> {
        if target.is_dir() {
            bail!("{}: is a directory", target.display());
        }
        if target.exists() && !force {
            bail!("{}: exists (use --force to replace it)", target.display());
        }
        let (name, parent) = split(target, "file")?;
        let start = Snapshot::take(target)
            .with_context(|| target.display().to_string())?;
        let prefix = format!(".{name}.partial-");
        let mut builder = tempfile::Builder::new();
        builder.prefix(&prefix);
        #[cfg(unix)]
        {
            // The mode of any new file: the kernel takes the umask off.
            use std::os::unix::fs::PermissionsExt;
            builder.permissions(std::fs::Permissions::from_mode(0o666));
        }
        let temp = builder.tempfile_in(&parent).with_context(|| {
            format!("{}: cannot create a file here", parent.display())
        })?;
        let _pending = crate::interrupt::register(temp.path());
        let handle = temp
            .as_file()
            .try_clone()
            .with_context(|| target.display().to_string())?;
        Ok(AtomicFile {
            target: target.to_path_buf(),
            start,
            temp,
            writer: Named {
                inner: std::io::BufWriter::new(handle),
                target: target.to_path_buf(),
            },
            _pending,
        })
    }

    /// Where to write.
    pub fn writer(&mut self) -> &mut dyn std::io::Write {
        &mut self.writer
    }

    /// Flushes, syncs and moves the file into place.
    pub fn commit(self) -> Result<()> {
        self.commit_with(Renames::SYSTEM)
    }

    fn commit_with(self, renames: Renames) -> Result<()> {
        let AtomicFile { target, start, writer, temp, _pending } = self;
        let file = writer
            .inner
            .into_inner()
            .map_err(|e| anyhow::anyhow!(named(&target, &e.into_error())))?;
        file.sync_all().with_context(|| target.display().to_string())?;
        drop(file);
        wait_at_gate(&target);
        let _hold = crate::interrupt::hold();
        let temp = temp.into_temp_path().keep().with_context(|| {
            format!("{}: cannot move the output into place", target.display())
        })?;
        let result = place(&temp, &target, &start, renames);
        finish(result, &temp, &target)
    }
}

/// The file name and the parent directory (`.` for a bare name) of an
/// output.
fn split(target: &Path, what: &str) -> Result<(String, PathBuf)> {
    let name = target
        .file_name()
        .with_context(|| format!("{}: not a {what} name", target.display()))?
        .to_string_lossy()
        .into_owned();
    let parent = match target.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    Ok((name, parent))
}

/// What an output's path held, entry by entry: nothing, or the entry and,
/// for a directory, everything inside it.
#[derive(Clone, Debug, PartialEq, Eq)]
struct Snapshot(Option<Vec<Stamp>>);

/// One entry of a [`Snapshot`]: where it is below the output, and what
/// changes whenever it is replaced, edited, resized or renamed over.
/// (Not the change time, which a rename of the entry itself updates.)
#[derive(Clone, Debug, PartialEq, Eq)]
struct Stamp {
    below: PathBuf,
    kind: u8,
    identity: (u64, u64),
    len: u64,
    modified: Option<std::time::SystemTime>,
}

impl Snapshot {
    /// What is at `path` now.
    fn take(path: &Path) -> std::io::Result<Snapshot> {
        match std::fs::symlink_metadata(path) {
            Ok(meta) => {
                let mut stamps = Vec::new();
                stamp_tree(path, PathBuf::new(), meta, &mut stamps)?;
                Ok(Snapshot(Some(stamps)))
            }
            Err(e) if e.kind() == ErrorKind::NotFound => Ok(Snapshot(None)),
            Err(e) => Err(e),
        }
    }
}

fn stamp_tree(
    path: &Path,
    below: PathBuf,
    meta: std::fs::Metadata,
    out: &mut Vec<Stamp>,
) -> std::io::Result<()> {
    let kind = if meta.is_dir() {
        b'd'
    } else if meta.is_symlink() {
        b'l'
    } else {
        b'f'
    };
    #[cfg(unix)]
    let identity = {
        use std::os::unix::fs::MetadataExt;
        (meta.dev(), meta.ino())
    };
    #[cfg(not(unix))]
    let identity = (0, 0);
    out.push(Stamp {
        below: below.clone(),
        kind,
        identity,
        len: meta.len(),
        modified: meta.modified().ok(),
    });
    if kind == b'd' {
        let mut names: Vec<_> = std::fs::read_dir(path)?
            .map(|e| e.map(|e| e.file_name()))
            .collect::<std::io::Result<_>>()?;
        names.sort();
        for name in names {
            let child = path.join(&name);
            let meta = std::fs::symlink_metadata(&child)?;
            stamp_tree(&child, below.join(&name), meta, out)?;
        }
    }
    Ok(())
}

/// Why a result was not placed.
enum NotPlaced {
    /// Something appeared at, or changed under, the output: it was left
    /// as it is and the result is kept at `kept`.
    Kept { appeared: bool, kept: PathBuf },
    /// A failure of the file system; the temporary is still there.
    Failed(std::io::Error),
    /// The output changed during the run, and swapping it back failed:
    /// the result is at the output and what was there at the temporary
    /// path, which must then not be removed.
    Stuck(std::io::Error),
}

impl From<std::io::Error> for NotPlaced {
    fn from(e: std::io::Error) -> Self {
        NotPlaced::Failed(e)
    }
}

/// Which renames the system offers; tests turn them off to run the
/// portable paths.
#[derive(Clone, Copy)]
struct Renames {
    no_replace: bool,
    exchange: bool,
}

impl Renames {
    const SYSTEM: Renames = Renames { no_replace: true, exchange: true };
}

/// Moves `temp` to `target` under the commit rule.
fn place(
    temp: &Path,
    target: &Path,
    start: &Snapshot,
    renames: Renames,
) -> Result<(), NotPlaced> {
    if start.0.is_none() {
        return place_new(temp, target, renames);
    }
    if renames.exchange {
        match exchange(temp, target) {
            Ok(true) => {
                // `temp` now holds what was at the output.
                if Snapshot::take(temp).is_ok_and(|now| now == *start) {
                    // Best effort: a leftover `.NAME.partial-*` can be
                    // deleted, and the result is in place.
                    let _ = remove_any(temp);
                    return Ok(());
                }
                // Undo: the changed output goes back, the result aside.
                if let Err(e) = exchange(temp, target) {
                    return Err(NotPlaced::Stuck(e));
                }
                let kept = keep_aside(temp, target, renames)?;
                return Err(NotPlaced::Kept { appeared: false, kept });
            }
            // The output was removed during the run: nothing to replace.
            Err(e) if e.kind() == ErrorKind::NotFound => {
                return place_new(temp, target, renames)
            }
            Err(e) => return Err(e.into()),
            Ok(false) => {}
        }
    }
    // Without an exchanging rename: check, move the old output aside
    // (a rename over a non-empty directory fails, and removing it before
    // the new one is in place could lose both), move the new one in.
    let now = Snapshot::take(target)?;
    if now.0.is_none() {
        return place_new(temp, target, renames);
    }
    if now != *start {
        let kept = keep_aside(temp, target, renames)?;
        return Err(NotPlaced::Kept { appeared: false, kept });
    }
    let old = tempfile::Builder::new()
        .prefix(".old-")
        .tempdir_in(temp.parent().unwrap_or(Path::new(".")))?
        .keep();
    let aside = old.join("previous");
    std::fs::rename(target, &aside)?;
    if let Err(e) = place_new(temp, target, renames) {
        // Put the old output back; if something took its place in the
        // meantime, leave the old one in `.old-*` rather than delete it.
        if rename_no_replace(&aside, target, renames).is_ok() {
            let _ = std::fs::remove_dir_all(&old);
        }
        return Err(e);
    }
    let _ = std::fs::remove_dir_all(&old);
    Ok(())
}

/// Moves `temp` to `target`, which held nothing at the start.
fn place_new(
    temp: &Path,
    target: &Path,
    renames: Renames,
) -> Result<(), NotPlaced> {
    match rename_no_replace(temp, target, renames) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == ErrorKind::AlreadyExists => {
            let kept = keep_aside(temp, target, renames)?;
            Err(NotPlaced::Kept { appeared: true, kept })
        }
        Err(e) => Err(e.into()),
    }
}

/// Moves `temp` to the first free sibling `NAME.new`, `NAME.new-2`, …
/// of `target`.
fn keep_aside(
    temp: &Path,
    target: &Path,
    renames: Renames,
) -> std::io::Result<PathBuf> {
    let name = target.file_name().unwrap_or_default().to_string_lossy();
    for n in 1..=1000 {
        let sibling = if n == 1 {
            format!("{name}.new")
        } else {
            format!("{name}.new-{n}")
        };
        let sibling = target.with_file_name(sibling);
        match rename_no_replace(temp, &sibling, renames) {
            Ok(()) => return Ok(sibling),
            Err(e) if e.kind() == ErrorKind::AlreadyExists => continue,
            Err(e) => return Err(e),
        }
    }
    Err(std::io::Error::new(
        ErrorKind::AlreadyExists,
        format!("{name}.new to {name}.new-1000 all exist"),
    ))
}

/// Turns the outcome of [`place`] into the command's result, removing
/// the temporary on a failure.
fn finish(
    result: Result<(), NotPlaced>,
    temp: &Path,
    target: &Path,
) -> Result<()> {
    match result {
        Ok(()) => Ok(()),
        Err(NotPlaced::Kept { appeared, kept }) => bail!(
            "{}: {} while this run was writing it, so it was left as it \
             is; the result is in {}",
            target.display(),
            if appeared { "appeared" } else { "changed" },
            kept.display()
        ),
        Err(NotPlaced::Stuck(e)) => bail!(
            "{}: changed while this run was writing it, and could not be \
             put back ({e}): the result is there and what was there is in {}",
            target.display(),
            temp.display()
        ),
        Err(NotPlaced::Failed(e)) => {
            let _ = remove_any(temp);
            Err(anyhow::Error::new(e)).with_context(|| {
                format!(
                    "{}: cannot move the output into place",
                    target.display()
                )
            })
        }
    }
}

/// Removes a file, a symbolic link or a directory with its contents.
fn remove_any(path: &Path) -> std::io::Result<()> {
    if std::fs::symlink_metadata(path)?.is_dir() {
        std::fs::remove_dir_all(path)
    } else {
        std::fs::remove_file(path)
    }
}

/// Renames `from` to `to` unless `to` exists (then `AlreadyExists`).
fn rename_no_replace(
    from: &Path,
    to: &Path,
    renames: Renames,
) -> std::io::Result<()> {
    if renames.no_replace {
        if let Some(done) = linux::rename2(from, to, linux::NO_REPLACE) {
            return done;
        }
    }
    if !std::fs::symlink_metadata(from)?.is_dir() {
        // A new hard link never replaces anything.
        match std::fs::hard_link(from, to) {
            Ok(()) => return std::fs::remove_file(from),
            Err(e) if e.kind() == ErrorKind::AlreadyExists => return Err(e),
            // No hard links on this file system: check, then rename.
            Err(_) => {}
        }
    }
    if std::fs::symlink_metadata(to).is_ok() {
        return Err(ErrorKind::AlreadyExists.into());
    }
    std::fs::rename(from, to)
}

/// Swaps `a` and `b` in one step where the system can; `Ok(false)` where
/// it cannot, `NotFound` if either is missing.
fn exchange(a: &Path, b: &Path) -> std::io::Result<bool> {
    match linux::rename2(a, b, linux::EXCHANGE) {
        Some(result) => result.map(|()| true),
        None => Ok(false),
    }
}

/// `renameat2(2)`, where it exists.
mod linux {
    use std::path::Path;

    /// `RENAME_NOREPLACE` of `<linux/fs.h>`.
    pub const NO_REPLACE: u32 = 1;
    /// `RENAME_EXCHANGE` of `<linux/fs.h>`.
    pub const EXCHANGE: u32 = 2;

    /// The rename with `flags`; `None` where the system or the file
    /// system does not offer it.
    #[cfg(any(target_os = "linux", target_os = "android"))]
    pub fn rename2(
        from: &Path,
        to: &Path,
        flags: u32,
    ) -> Option<std::io::Result<()>> {
        use std::ffi::CString;
        use std::os::unix::ffi::OsStrExt;
        let from = CString::new(from.as_os_str().as_bytes()).ok()?;
        let to = CString::new(to.as_os_str().as_bytes()).ok()?;
        // SAFETY: both paths are NUL-terminated strings that outlive the
        // call; the system call takes no other pointers. Called through
        // syscall(2) because not every C library wraps it.
        let rc = unsafe {
            libc::syscall(
                libc::SYS_renameat2,
                libc::AT_FDCWD,
                from.as_ptr(),
                libc::AT_FDCWD,
                to.as_ptr(),
                flags as libc::c_uint,
            )
        };
        if rc == 0 {
            return Some(Ok(()));
        }
        let e = std::io::Error::last_os_error();
        match e.raw_os_error() {
            // Not offered by this kernel or this file system.
            Some(libc::ENOSYS | libc::EINVAL) => None,
            Some(libc::EEXIST | libc::ENOTEMPTY) => {
                Some(Err(std::io::ErrorKind::AlreadyExists.into()))
            }
            _ => Some(Err(e)),
        }
    }

    /// No such rename on this system.
    #[cfg(not(any(target_os = "linux", target_os = "android")))]
    pub fn rename2(
        _from: &Path,
        _to: &Path,
        _flags: u32,
    ) -> Option<std::io::Result<()>> {
        None
    }
}

/// The test hook of the commit: a directory set by
/// [`set_commit_gate`].
static GATE: OnceLock<PathBuf> = OnceLock::new();

/// Makes every commit to an output named `NAME` wait while the file
/// `NAME.hold` exists in `dir`, after announcing itself with an empty
/// file `NAME.waiting-PID` there (for at most two minutes). A test hook:
/// the command sets it from the environment variable
/// `LEXICLADE_TEST_COMMIT_GATE`, so that tests can change the output
/// between the end of a run and its commit, deterministically.
pub fn set_commit_gate(dir: PathBuf) {
    let _ = GATE.set(dir);
}

fn wait_at_gate(target: &Path) {
    let (Some(gate), Some(name)) = (GATE.get(), target.file_name()) else {
        return;
    };
    let name = name.to_string_lossy();
    let hold = gate.join(format!("{name}.hold"));
    if !hold.exists() {
        return;
    }
    let waiting = gate.join(format!("{name}.waiting-{}", std::process::id()));
    let _ = std::fs::write(&waiting, "");
    let started = std::time::Instant::now();
    while hold.exists() && started.elapsed().as_secs() < 120 {
        std::thread::sleep(std::time::Duration::from_millis(10));
    }
}

/// Refuses an output that is one of the inputs or contains one: writing
/// it would destroy what is being read.
pub fn refuse_overlap(inputs: &[PathBuf], output: &Path) -> Result<()> {
    let Ok(out) = output.canonicalize() else {
        // An output that does not exist yet cannot be an input.
        return Ok(());
    };
    for input in inputs {
        if input.as_os_str() == "-" {
            continue;
        }
        if let Ok(inp) = input.canonicalize() {
            if inp == out || inp.starts_with(&out) {
                bail!(
                    "{}: the output would overwrite the input {}",
                    output.display(),
                    input.display()
                );
            }
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The system's renames, and the portable paths without them.
    const ALL: [Renames; 3] = [
        Renames::SYSTEM,
        Renames { no_replace: true, exchange: false },
        Renames { no_replace: false, exchange: false },
    ];

    fn names(dir: &Path) -> Vec<String> {
        let mut names: Vec<String> = std::fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().into_string().unwrap())
            .collect();
        names.sort();
        names
    }

    #[test]
    fn commit_replaces_and_drop_leaves_nothing() {
        for renames in ALL {
            let root = tempfile::tempdir().unwrap();
            let target = root.path().join("out");
            let dir = AtomicDir::create(&target, false).unwrap();
            std::fs::write(dir.path().join("a"), "1").unwrap();
            dir.commit_with(renames).unwrap();
            assert_eq!(
                std::fs::read_to_string(target.join("a")).unwrap(),
                "1"
            );

            assert!(AtomicDir::create(&target, false).is_err());
            let dir = AtomicDir::create(&target, true).unwrap();
            std::fs::write(dir.path().join("b"), "2").unwrap();
            drop(dir);
            // Dropped before commit: the old output stays, no temp is left.
            assert!(target.join("a").exists());
            assert_eq!(names(root.path()), ["out"]);

            let dir = AtomicDir::create(&target, true).unwrap();
            std::fs::write(dir.path().join("b"), "2").unwrap();
            dir.commit_with(renames).unwrap();
            assert!(!target.join("a").exists() && target.join("b").exists());
            assert_eq!(names(root.path()), ["out"]);
        }
    }

    #[test]
    fn a_directory_that_appears_is_kept_and_the_result_set_aside() {
        for renames in ALL {
            let root = tempfile::tempdir().unwrap();
            let target = root.path().join("out");
            let dir = AtomicDir::create(&target, false).unwrap();
            std::fs::write(dir.path().join("a"), "result").unwrap();
            std::fs::create_dir(&target).unwrap();
            std::fs::write(target.join("notes.txt"), "precious").unwrap();
            let err = dir.commit_with(renames).unwrap_err().to_string();
            assert!(err.contains("appeared"), "{err}");
            assert!(err.ends_with("out.new"), "{err}");
            assert_eq!(names(&target), ["notes.txt"]);
            let kept = root.path().join("out.new");
            assert_eq!(
                std::fs::read_to_string(kept.join("a")).unwrap(),
                "result"
            );
            assert_eq!(names(root.path()), ["out", "out.new"]);
        }
    }

    #[test]
    fn a_forced_output_changed_during_the_run_is_not_replaced() {
        for renames in ALL {
            let root = tempfile::tempdir().unwrap();
            let target = root.path().join("out");
            std::fs::create_dir(&target).unwrap();
            std::fs::write(target.join("old"), "old").unwrap();
            // A sibling name already taken: the result goes to the next.
            std::fs::write(root.path().join("out.new"), "").unwrap();
            let dir = AtomicDir::create(&target, true).unwrap();
            std::fs::write(dir.path().join("a"), "result").unwrap();
            std::fs::write(target.join("notes.txt"), "precious").unwrap();
            let err = dir.commit_with(renames).unwrap_err().to_string();
            assert!(err.contains("changed"), "{err}");
            assert!(err.ends_with("out.new-2"), "{err}");
            assert_eq!(names(&target), ["notes.txt", "old"]);
            assert_eq!(names(root.path()), ["out", "out.new", "out.new-2"]);
        }
    }

    #[test]
    fn a_file_that_appears_or_changes_is_kept() {
        for renames in ALL {
            let root = tempfile::tempdir().unwrap();
            let target = root.path().join("f.txt");
            let mut file = AtomicFile::create(&target, false).unwrap();
            file.writer().write_all(b"result").unwrap();
            std::fs::write(&target, "precious").unwrap();
            let err = file.commit_with(renames).unwrap_err().to_string();
            assert!(err.contains("appeared"), "{err}");
            assert_eq!(std::fs::read_to_string(&target).unwrap(), "precious");
            let kept = root.path().join("f.txt.new");
            assert_eq!(std::fs::read_to_string(&kept).unwrap(), "result");
            std::fs::remove_file(&kept).unwrap();

            // --force over it: fine while unchanged, refused once edited.
            let mut file = AtomicFile::create(&target, true).unwrap();
            file.writer().write_all(b"second").unwrap();
            file.commit_with(renames).unwrap();
            assert_eq!(std::fs::read_to_string(&target).unwrap(), "second");
            let mut file = AtomicFile::create(&target, true).unwrap();
            file.writer().write_all(b"third").unwrap();
            std::fs::write(&target, "edited by hand").unwrap();
            let err = file.commit_with(renames).unwrap_err().to_string();
            assert!(err.contains("changed"), "{err}");
            assert_eq!(
                std::fs::read_to_string(&target).unwrap(),
                "edited by hand"
            );
            assert_eq!(std::fs::read_to_string(&kept).unwrap(), "third");
            assert_eq!(names(root.path()), ["f.txt", "f.txt.new"]);
        }
    }

    #[test]
    fn an_output_removed_during_the_run_is_written_anew() {
        for renames in ALL {
            let root = tempfile::tempdir().unwrap();
            let target = root.path().join("out");
            std::fs::create_dir(&target).unwrap();
            let dir = AtomicDir::create(&target, false).unwrap();
            std::fs::write(dir.path().join("a"), "1").unwrap();
            std::fs::remove_dir(&target).unwrap();
            dir.commit_with(renames).unwrap();
            assert_eq!(names(&target), ["a"]);
            assert_eq!(names(root.path()), ["out"]);
        }
    }

    #[cfg(unix)]
    #[test]
    fn files_get_the_mode_of_a_new_file() {
        use std::os::unix::fs::PermissionsExt;
        let root = tempfile::tempdir().unwrap();
        let target = root.path().join("f.txt");
        std::fs::write(&target, "old").unwrap();
        std::fs::set_permissions(
            &target,
            std::fs::Permissions::from_mode(0o600),
        )
        .unwrap();
        // What the umask makes of a new file, seen on a plain one.
        let probe = root.path().join("probe");
        std::fs::write(&probe, "").unwrap();
        let expected = std::fs::metadata(&probe).unwrap().permissions().mode();
        let mut file = AtomicFile::create(&target, true).unwrap();
        file.writer().write_all(b"new").unwrap();
        file.commit().unwrap();
        let mode = std::fs::metadata(&target).unwrap().permissions().mode();
        assert_eq!(mode & 0o777, expected & 0o777);
    }

    #[test]
    fn output_over_input_is_refused() {
        let root = tempfile::tempdir().unwrap();
        let input = root.path().join("in");
        std::fs::create_dir(&input).unwrap();
        std::fs::write(input.join("t.txt"), "x").unwrap();
        assert!(refuse_overlap(&[input.join("t.txt")], &input).is_err());
        assert!(refuse_overlap(std::slice::from_ref(&input), &input).is_err());
        assert!(refuse_overlap(&[input.join("t.txt")], &input.join("t.txt"))
            .is_err());
        assert!(refuse_overlap(
            std::slice::from_ref(&input),
            &root.path().join("o")
        )
        .is_ok());
    }
}
