//! Output directories that appear whole or not at all.
//!
//! A command writes into a temporary sibling of its output directory and
//! renames it into place at the end, so a failed or interrupted run
//! leaves any previous output untouched and nothing half-written. A
//! temporary directory left by a killed process is named
//! `.NAME.partial-*` beside the output and can be deleted.

use std::path::{Path, PathBuf};

use anyhow::{bail, Context, Result};

/// A temporary directory that becomes `target` on [`AtomicDir::commit`]
/// and is removed if dropped before.
pub struct AtomicDir {
    target: PathBuf,
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
        let name = target
            .file_name()
            .with_context(|| {
                format!("{}: not a directory name", target.display())
            })?
            .to_string_lossy()
            .into_owned();
        let parent = match target.parent() {
            Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let temp = tempfile::Builder::new()
            .prefix(&format!(".{name}.partial-"))
            .tempdir_in(&parent)
            .with_context(|| {
                format!("{}: cannot create a directory here", parent.display())
            })?;
        let _pending = crate::interrupt::register(temp.path());
        Ok(AtomicDir { target: target.to_path_buf(), temp, _pending })
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

    /// Moves the written directory into place, replacing what was there.
    pub fn commit(self) -> Result<()> {
        let temp = self.temp.keep();
        let target = &self.target;
        let result = (|| -> Result<()> {
            if target.is_dir() {
                // Move the old output aside first: a rename over a
                // non-empty directory fails, and removing it before the
                // new one is in place could lose both.
                let old = tempfile::Builder::new()
                    .prefix(".old-")
                    .tempdir_in(temp.parent().unwrap_or(Path::new(".")))?
                    .keep();
                let aside = old.join("previous");
                std::fs::rename(target, &aside)?;
                if let Err(e) = std::fs::rename(&temp, target) {
                    let _ = std::fs::rename(&aside, target);
                    let _ = std::fs::remove_dir_all(&old);
                    return Err(e.into());
                }
                std::fs::remove_dir_all(&old)?;
            } else {
                std::fs::rename(&temp, target)?;
            }
            Ok(())
        })();
        if result.is_err() {
            let _ = std::fs::remove_dir_all(&temp);
        }
        result.with_context(|| {
            format!("{}: cannot move the output into place", target.display())
        })
    }
}

/// A file that appears whole or not at all: written to a temporary file
/// beside its target and renamed onto it by [`AtomicFile::commit`].
pub struct AtomicFile {
    target: PathBuf,
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
        let name = target
            .file_name()
            .with_context(|| format!("{}: not a file name", target.display()))?
            .to_string_lossy()
            .into_owned();
        let parent = match target.parent() {
            Some(p) if !p.as_os_str().is_empty() => p,
            _ => Path::new("."),
        };
        let temp = tempfile::Builder::new()
            .prefix(&format!(".{name}.partial-"))
            .tempfile_in(parent)
            .with_context(|| {
                format!("{}: cannot create a file here", parent.display())
            })?;
        let _pending = crate::interrupt::register(temp.path());
        let handle = temp
            .as_file()
            .try_clone()
            .with_context(|| target.display().to_string())?;
        Ok(AtomicFile {
            target: target.to_path_buf(),
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

    /// Flushes, syncs and renames the file into place.
    pub fn commit(self) -> Result<()> {
        let target = self.target;
        let file =
            self.writer.inner.into_inner().map_err(|e| {
                anyhow::anyhow!(named(&target, &e.into_error()))
            })?;
        file.sync_all().with_context(|| target.display().to_string())?;
        drop(file);
        self.temp.persist(&target).with_context(|| {
            format!("{}: cannot move the output into place", target.display())
        })?;
        Ok(())
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

    #[test]
    fn commit_replaces_and_drop_leaves_nothing() {
        let root = tempfile::tempdir().unwrap();
        let target = root.path().join("out");
        let dir = AtomicDir::create(&target, false).unwrap();
        std::fs::write(dir.path().join("a"), "1").unwrap();
        dir.commit().unwrap();
        assert_eq!(std::fs::read_to_string(target.join("a")).unwrap(), "1");

        assert!(AtomicDir::create(&target, false).is_err());
        let dir = AtomicDir::create(&target, true).unwrap();
        std::fs::write(dir.path().join("b"), "2").unwrap();
        drop(dir);
        // Dropped before commit: the old output stays, no temp is left.
        assert!(target.join("a").exists());
        let names: Vec<_> = std::fs::read_dir(root.path())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(names, vec!["out"]);

        let dir = AtomicDir::create(&target, true).unwrap();
        std::fs::write(dir.path().join("b"), "2").unwrap();
        dir.commit().unwrap();
        assert!(!target.join("a").exists() && target.join("b").exists());
        assert_eq!(std::fs::read_dir(root.path()).unwrap().count(), 1);
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
