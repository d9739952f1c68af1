//! Faults around the input: interrupts during `train` and `ablate`, a
//! full disk, and output directories that cannot be written. Each must
//! end with a one-line error (or exit code 130 for an interrupt), leave
//! any previous output as it was and leave nothing half-written.

use std::path::Path;
use std::process::Command;

use crate::util::{lexiclade, stop, Dir, Run, STOP_SIGNALS};

/// Whether the error message begins with `path` (the file, or the
/// directory under which it is).
fn names_first(stderr: &str, path: &str) -> bool {
    stderr
        .strip_prefix("lexiclade: ")
        .and_then(|rest| rest.strip_prefix(path))
        .is_some_and(|rest| rest.starts_with(':') || rest.starts_with('/'))
}

/// The names in `dir`, sorted.
fn names(dir: &Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .collect();
    names.sort();
    names
}

/// An interrupt (SIGINT), SIGTERM or SIGHUP during training leaves the
/// previous model file as it was and no temporary file beside it.
#[test]
#[cfg(unix)]
#[cfg_attr(
    debug_assertions,
    ignore = "heavy: run with scripts/test.sh (release profile)"
)]
fn interrupted_training_keeps_the_previous_model() {
    let dir = Dir::new();
    dir.write("small.conll", lexiclade::demo::labeled(50, 1, 1.0));
    lexiclade(
        dir.path(),
        &["train", "--train", "small.conll", "--model", "m.bin", "-q"],
    )
    .ok();
    let before = std::fs::read(dir.join("m.bin")).unwrap();
    // Long enough to be mid-training after a second and a half.
    dir.write("big.conll", lexiclade::demo::labeled(60_000, 2, 1.0));
    for (signal, code) in STOP_SIGNALS {
        stop(
            dir.path(),
            &[
                "train",
                "--train",
                "big.conll",
                "--model",
                "m.bin",
                "--epochs",
                "200",
                "--force",
                "-q",
            ],
            std::time::Duration::from_millis(1500),
            signal,
            code,
        );
        assert_eq!(std::fs::read(dir.join("m.bin")).unwrap(), before);
        assert_eq!(names(dir.path()), ["big.conll", "m.bin", "small.conll"]);
    }
}

/// An interrupt (SIGINT), SIGTERM or SIGHUP during an ablation leaves
/// the previous result directory as it was and no temporary directory
/// beside it.
#[test]
#[cfg(unix)]
#[cfg_attr(
    debug_assertions,
    ignore = "heavy: run with scripts/test.sh (release profile)"
)]
fn interrupted_ablation_keeps_the_previous_result() {
    let dir = Dir::new();
    dir.write("raw.txt", lexiclade::demo::corpus(1_000, 1));
    dir.write("train.conll", lexiclade::demo::labeled(100, 11, 0.5));
    dir.write("test.conll", lexiclade::demo::labeled(40, 13, 1.0));
    let configs = crate::util::repo().join("configs");
    std::fs::copy(configs.join("ner.toml"), dir.join("ner.toml")).unwrap();
    let experiment = |epochs: u32, seeds: &str| {
        format!(
            "[data]\ntrain = \"train.conll\"\ndev = \"test.conll\"\n\
             test = \"test.conll\"\n\
             [clusters]\nraw = [\"raw.txt\"]\nclasses = 16\n\
             [[features]]\nname = \"clusters\"\nconfig = \"ner.toml\"\n\
             [training]\nsizes = [50]\nseeds = [{seeds}]\n\
             epochs = {epochs}\nrounds = 100\n"
        )
    };
    dir.write("quick.toml", experiment(1, "1"));
    lexiclade(
        dir.path(),
        &["ablate", "--config", "quick.toml", "--out", "r", "-q"],
    )
    .ok();
    let before = dir.read("r/runs.csv");
    // Many long runs on more data: still busy after a second and a half.
    dir.write("train.conll", lexiclade::demo::labeled(20_000, 11, 0.5));
    dir.write("long.toml", experiment(100, "1, 2, 3, 4, 5, 6, 7, 8"));
    for (signal, code) in STOP_SIGNALS {
        stop(
            dir.path(),
            &[
                "ablate",
                "--config",
                "long.toml",
                "--out",
                "r",
                "--force",
                "-q",
            ],
            std::time::Duration::from_millis(1500),
            signal,
            code,
        );
        assert_eq!(dir.read("r/runs.csv"), before);
        assert_eq!(
            names(dir.path()),
            [
                "long.toml",
                "ner.toml",
                "quick.toml",
                "r",
                "raw.txt",
                "test.conll",
                "train.conll"
            ]
        );
    }
}

/// Zipfian text with 5,000 words: every output of it is far above the
/// limits the tests set.
fn write_zipf(dir: &Dir, name: &str) {
    let mut text = Vec::new();
    lexiclade::synth::ZipfCorpus::new(5_000, 100_000, 1)
        .write_to(&mut text)
        .unwrap();
    dir.write(name, text);
}

/// The feature config without clusters, as `c.toml`.
fn copy_config(dir: &Dir) {
    let configs = crate::util::repo().join("configs");
    std::fs::copy(configs.join("ner-no-clusters.toml"), dir.join("c.toml"))
        .unwrap();
}

/// Runs `lexiclade args` in `cwd` with files limited to `kib` KiB
/// (`ulimit -f`, the signal it raises ignored), so that writing past it
/// fails with "File too large" as a full disk fails with "No space left".
#[cfg(unix)]
fn with_file_limit(cwd: &Path, kib: u64, args: &[&str]) -> Run {
    let script = format!("trap '' XFSZ; ulimit -f {kib}; exec \"$@\"");
    let out = Command::new("bash")
        .args(["-c", &script, "bash", env!("CARGO_BIN_EXE_lexiclade")])
        .args(args)
        .current_dir(cwd)
        .output()
        .expect("run bash");
    Run::from(out)
}

/// A write that fails half-way (a file-size limit standing in for a full
/// disk) is a one-line error naming the file, exit code 2, and leaves
/// neither the output nor a temporary file behind.
#[test]
#[cfg(unix)]
fn a_write_that_fails_leaves_nothing_behind() {
    let dir = Dir::new();
    write_zipf(&dir, "raw.txt");
    dir.write("train.conll", lexiclade::demo::labeled(300, 1, 1.0));
    copy_config(&dir);
    // A model and an experiment to tag and ablate with; the limit applies
    // only to the runs below.
    lexiclade(
        dir.path(),
        &["train", "--train", "train.conll", "--model", "ok.bin", "-q"],
    )
    .ok();
    dir.write(
        "exp.toml",
        "[data]\ntrain = \"train.conll\"\ndev = \"train.conll\"\n\
         test = \"train.conll\"\n[clusters]\nraw = [\"raw.txt\"]\n\
         classes = 8\n[[features]]\nname = \"plain\"\nconfig = \"c.toml\"\n\
         [training]\nsizes = [100]\nseeds = [1]\nepochs = 1\nrounds = 10\n",
    );
    let inputs = names(dir.path());
    let cases: [&[&str]; 6] = [
        &["cluster", "raw.txt", "--out", "o", "--classes", "8", "-q"],
        &["count", "raw.txt", "--out", "c.tsv", "-q"],
        &["train", "--train", "train.conll", "--model", "m.bin", "-q"],
        &["featurize", "train.conll", "--config", "c.toml", "--out", "f.txt"],
        &["tag", "--model", "ok.bin", "train.conll", "--out", "t.conll"],
        &["ablate", "--config", "exp.toml", "--out", "r", "-q"],
    ];
    for args in cases {
        let run = with_file_limit(dir.path(), 4, args).user_error("too large");
        let flag = if args.contains(&"--out") { "--out" } else { "--model" };
        let out = args[args.iter().position(|a| *a == flag).unwrap() + 1];
        assert!(names_first(&run.stderr, out), "{args:?}: {}", run.stderr);
        assert!(!run.stderr.contains(".partial-"), "{}", run.stderr);
        assert_eq!(names(dir.path()), inputs, "{args:?} left something");
    }
}

/// A small mounted file system, removed again on drop; `None` (after
/// saying why) where mounting is not allowed.
struct Mount(std::path::PathBuf);

impl Mount {
    fn tmpfs(at: &Path, options: &str) -> Option<Mount> {
        std::fs::create_dir_all(at).unwrap();
        let ok = Command::new("mount")
            .args(["-t", "tmpfs", "-o", options, "tmpfs"])
            .arg(at)
            .stderr(std::process::Stdio::null())
            .status()
            .is_ok_and(|s| s.success());
        if !ok {
            eprintln!("note: cannot mount a tmpfs here (needs privileges)");
        }
        ok.then(|| Mount(at.to_path_buf()))
    }
}

impl Drop for Mount {
    fn drop(&mut self) {
        let _ = Command::new("umount").arg(&self.0).status();
    }
}

/// A full disk (a 64 KiB tmpfs where mounting is allowed): the same clean
/// failure as any failed write.
#[test]
#[cfg(target_os = "linux")]
fn a_full_disk_leaves_nothing_behind() {
    let dir = Dir::new();
    write_zipf(&dir, "raw.txt");
    let Some(disk) = Mount::tmpfs(&dir.join("disk"), "size=64k") else {
        return;
    };
    for (args, out) in [
        (
            ["cluster", "raw.txt", "--out", "disk/o", "--classes", "8"],
            "disk/o",
        ),
        (
            [
                "count",
                "raw.txt",
                "--out",
                "disk/c.tsv",
                "--lowercase",
                "--force",
            ],
            "disk/c.tsv",
        ),
    ] {
        let mut all = args.to_vec();
        all.push("-q");
        let run = lexiclade(dir.path(), &all).user_error("No space left");
        assert!(names_first(&run.stderr, out), "{}", run.stderr);
        assert!(!run.stderr.contains(".partial-"), "{}", run.stderr);
        assert!(names(&disk.0).is_empty(), "{args:?} left something");
    }
}

/// An output directory that cannot be written: a read-only file system
/// where mounting is allowed (the tests may run as root, whom permission
/// bits do not stop), else a directory without write permission.
#[test]
#[cfg(target_os = "linux")]
fn an_output_directory_that_is_not_writable() {
    let dir = Dir::new();
    dir.write("raw.txt", lexiclade::demo::corpus(500, 1));
    dir.write("train.conll", lexiclade::demo::labeled(30, 1, 1.0));
    copy_config(&dir);
    let ro = dir.join("ro");
    let mount = Mount::tmpfs(&ro, "ro,size=64k");
    if mount.is_none() {
        use std::os::unix::fs::PermissionsExt;
        std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o555))
            .unwrap();
        if std::fs::write(ro.join("probe"), "x").is_ok() {
            eprintln!("note: permissions do not stop this user; skipped");
            return;
        }
    }
    let cases: [&[&str]; 4] = [
        &["cluster", "raw.txt", "--out", "ro/o", "--classes", "4", "-q"],
        &["count", "raw.txt", "--out", "ro/c.tsv", "-q"],
        &["train", "--train", "train.conll", "--model", "ro/m.bin", "-q"],
        &[
            "featurize",
            "train.conll",
            "--config",
            "c.toml",
            "--out",
            "ro/f.txt",
        ],
    ];
    for args in cases {
        let run = lexiclade(dir.path(), args);
        let run = run.user_error("os error");
        assert!(names_first(&run.stderr, "ro"), "{}", run.stderr);
        assert!(
            run.stderr.contains("Read-only")
                || run.stderr.contains("ermission"),
            "{args:?}: {}",
            run.stderr
        );
        assert!(names(&ro).is_empty());
    }
}

/// Standard output on a full device (`/dev/full`): a one-line error
/// naming it, exit code 2.
#[test]
#[cfg(target_os = "linux")]
fn standard_output_on_a_full_device() {
    let dir = Dir::new();
    dir.write("train.conll", lexiclade::demo::labeled(300, 1, 1.0));
    copy_config(&dir);
    let full = std::fs::OpenOptions::new().write(true).open("/dev/full");
    let Ok(full) = full else {
        eprintln!("note: no /dev/full here; skipped");
        return;
    };
    let out = Command::new(env!("CARGO_BIN_EXE_lexiclade"))
        .args(["featurize", "train.conll", "--config", "c.toml"])
        .current_dir(dir.path())
        .stdout(full)
        .output()
        .unwrap();
    let run = Run::from(out);
    run.user_error("standard output: No space left on device");
}
