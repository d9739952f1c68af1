//! Outputs: the commit that never replaces what it did not expect
//! (something that appeared at the output during the run, two runs to
//! one output), cleanup on SIGTERM and SIGHUP, the `--threads` bound, the
//! mode of every output, `count --out -`, and the small checks of
//! messages (prefix-free paths, the config needing clusters, empty
//! inputs of `count` and `tag --plain`, `show --levels`).
//!
//! The races are made deterministic with the commit gate
//! (`LEXICLADE_TEST_COMMIT_GATE`, see `atomic::set_commit_gate`): a run
//! stops just before moving its output into place, the test changes the
//! output, then lets the run go on.

use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use crate::util::{lexiclade, lexiclade_stdin, Dir, Run};

/// A directory with a little of everything the commands read: raw text,
/// labeled files, the shipped feature configs, a cluster directory `cl`,
/// a model `m.bin` and a small experiment `exp.toml`.
fn setup() -> Dir {
    let dir = Dir::new();
    dir.write("raw.txt", lexiclade::demo::corpus(300, 1));
    dir.write("train.conll", lexiclade::demo::labeled(60, 1, 1.0));
    dir.write("empty.txt", "");
    let configs = crate::util::repo().join("configs");
    for name in ["ner.toml", "ner-no-clusters.toml"] {
        std::fs::copy(configs.join(name), dir.join(name)).unwrap();
    }
    lexiclade(
        dir.path(),
        &["cluster", "raw.txt", "--out", "cl", "--classes", "8", "-q"],
    )
    .ok();
    lexiclade(
        dir.path(),
        &["train", "--train", "train.conll", "--model", "m.bin", "-q"],
    )
    .ok();
    dir.write(
        "exp.toml",
        "[data]\ntrain = \"train.conll\"\ndev = \"train.conll\"\n\
         test = \"train.conll\"\n[clusters]\nraw = [\"raw.txt\"]\n\
         classes = 8\n[[features]]\nname = \"plain\"\n\
         config = \"ner-no-clusters.toml\"\n\
         [training]\nsizes = [30]\nseeds = [1]\nepochs = 1\nrounds = 10\n",
    );
    dir
}

/// Every command that writes, with its output (a directory when the
/// name has no extension).
const WRITERS: [(&str, &[&str]); 8] = [
    ("oc", &["cluster", "raw.txt", "--out", "oc", "--classes", "8", "-q"]),
    ("c.tsv", &["count", "raw.txt", "--out", "c.tsv", "-q"]),
    (
        "t.conll",
        &["tag", "--model", "m.bin", "train.conll", "--out", "t.conll"],
    ),
    (
        "f.txt",
        &[
            "featurize",
            "train.conll",
            "--config",
            "ner-no-clusters.toml",
            "--out",
            "f.txt",
            "-q",
        ],
    ),
    (
        "m2.bin",
        &["train", "--train", "train.conll", "--model", "m2.bin", "-q"],
    ),
    ("tree.svg", &["show", "cl", "--svg", "tree.svg"]),
    ("r", &["ablate", "--config", "exp.toml", "--out", "r", "-q"]),
    ("d", &["demo", "--out", "d"]),
];

/// Starts `lexiclade args` in `cwd`, stopping before it commits `out`.
fn start_gated(cwd: &Path, args: &[&str], out: &str) -> Child {
    let gate = cwd.join("gate");
    std::fs::create_dir_all(&gate).unwrap();
    std::fs::write(gate.join(format!("{out}.hold")), "").unwrap();
    Command::new(env!("CARGO_BIN_EXE_lexiclade"))
        .args(args)
        .current_dir(cwd)
        .env("LEXICLADE_TEST_COMMIT_GATE", &gate)
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap()
}

/// Waits until `n` runs wait at the gate before committing `out`.
fn wait_at_gate(cwd: &Path, out: &str, n: usize, children: &mut [Child]) {
    let started = Instant::now();
    let prefix = format!("{out}.waiting-");
    loop {
        let waiting = std::fs::read_dir(cwd.join("gate"))
            .unwrap()
            .filter(|e| {
                e.as_ref()
                    .unwrap()
                    .file_name()
                    .to_string_lossy()
                    .starts_with(&prefix)
            })
            .count();
        if waiting == n {
            return;
        }
        for child in children.iter_mut() {
            if let Some(status) = child.try_wait().unwrap() {
                panic!("{out}: the run ended before its commit: {status}");
            }
        }
        assert!(
            started.elapsed() < Duration::from_secs(300),
            "{out}: no run at the gate"
        );
        std::thread::sleep(Duration::from_millis(20));
    }
}

/// Lets the runs waiting to commit `out` go on.
fn release(cwd: &Path, out: &str) {
    std::fs::remove_file(cwd.join("gate").join(format!("{out}.hold")))
        .unwrap();
}

/// Removes everything from the gate directory.
fn clear_gate(cwd: &Path) {
    for entry in std::fs::read_dir(cwd.join("gate")).unwrap() {
        std::fs::remove_file(entry.unwrap().path()).unwrap();
    }
}

fn finish(child: Child) -> Run {
    Run::from(child.wait_with_output().unwrap())
}

/// The names in `dir`, sorted, without the gate.
fn names(dir: &Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .filter(|n| n != "gate")
        .collect();
    names.sort();
    names
}

/// Whether `path` holds a complete output of the command writing `out`.
fn complete(path: &Path, out: &str) -> bool {
    match out {
        "oc" => ["clusters.tsv", "merges.tsv", "summary.json", "timing.json"]
            .iter()
            .all(|f| path.join(f).is_file()),
        "r" => {
            path.join("summary.md").is_file()
                && path.join("prefixes.svg").is_file()
        }
        "d" => lexiclade::demo::FILES.iter().all(|f| path.join(f).is_file()),
        _ => std::fs::metadata(path).is_ok_and(|m| m.is_file() && m.len() > 0),
    }
}

/// Puts the user's own content at `out`: a directory with a note for a
/// directory output, a file otherwise.
fn make_precious(cwd: &Path, out: &str) {
    let path = cwd.join(out);
    if out.contains('.') {
        std::fs::write(&path, "precious").unwrap();
    } else {
        std::fs::create_dir(&path).unwrap();
        std::fs::write(path.join("notes.txt"), "precious").unwrap();
    }
}

fn is_precious(cwd: &Path, out: &str) -> bool {
    let path = cwd.join(out);
    let note = if out.contains('.') { path } else { path.join("notes.txt") };
    std::fs::read_to_string(note).is_ok_and(|s| s == "precious")
}

/// The race of the issue: the output appears while the run writes it.
/// The run refuses (one line naming the output, exit code 2), leaves the
/// user's content as it is and keeps its result beside it, under
/// `OUT.new`, which the message names.
#[test]
#[cfg(unix)]
fn an_output_that_appears_during_the_run_is_left_alone() {
    let dir = setup();
    for (out, args) in WRITERS {
        let mut child = [start_gated(dir.path(), args, out)];
        wait_at_gate(dir.path(), out, 1, &mut child);
        make_precious(dir.path(), out);
        release(dir.path(), out);
        let [child] = child;
        let mut run = finish(child);
        if out == "d" {
            // The demo's first line says what it does; the error follows.
            let (intro, rest) = run.stderr.split_once('\n').unwrap();
            assert!(intro.starts_with("lexiclade demo: "), "{intro}");
            run.stderr = rest.to_string();
        }
        let run = run.user_error(&format!(
            "{out}: appeared while this run was writing it, so it was left as it is; \
             the result is in {out}.new"
        ));
        assert!(
            run.stderr.starts_with(&format!("lexiclade: {out}: ")),
            "{}",
            run.stderr
        );
        assert!(
            is_precious(dir.path(), out),
            "{out}: the user's content was touched"
        );
        assert!(
            complete(&dir.join(&format!("{out}.new")), out),
            "{out}.new is not whole"
        );
        assert!(
            !names(dir.path()).iter().any(|n| n.contains(".partial-")),
            "{out}: {:?}",
            names(dir.path())
        );
    }
}

/// With --force an output that existed at the start is replaced, but not
/// once it changed during the run: a file added to the directory, a file
/// edited.
#[test]
#[cfg(unix)]
fn a_forced_output_that_changes_during_the_run_is_left_alone() {
    let dir = setup();
    // A directory output: a note added inside it.
    lexiclade(
        dir.path(),
        &["cluster", "raw.txt", "--out", "oc", "--classes", "4", "-q"],
    )
    .ok();
    let args = [
        "cluster",
        "raw.txt",
        "--out",
        "oc",
        "--classes",
        "8",
        "--force",
        "-q",
    ];
    let mut child = [start_gated(dir.path(), &args, "oc")];
    wait_at_gate(dir.path(), "oc", 1, &mut child);
    dir.write("oc/notes.txt", "precious");
    release(dir.path(), "oc");
    let [child] = child;
    finish(child).user_error(
        "oc: changed while this run was writing it, so it was left as it is; \
         the result is in oc.new",
    );
    assert_eq!(dir.read("oc/notes.txt"), "precious");
    let summary = |p: &str| -> serde_json::Value {
        serde_json::from_str(&dir.read(&format!("{p}/summary.json"))).unwrap()
    };
    assert_eq!(summary("oc")["classes"], 4);
    assert_eq!(summary("oc.new")["classes"], 8);

    // A file output edited by hand.
    lexiclade(dir.path(), &["count", "raw.txt", "--out", "c.tsv", "-q"]).ok();
    let args =
        ["count", "raw.txt", "--out", "c.tsv", "--lowercase", "--force", "-q"];
    let mut child = [start_gated(dir.path(), &args, "c.tsv")];
    wait_at_gate(dir.path(), "c.tsv", 1, &mut child);
    dir.write("c.tsv", "my edits");
    release(dir.path(), "c.tsv");
    let [child] = child;
    finish(child).user_error("c.tsv: changed while this run");
    assert_eq!(dir.read("c.tsv"), "my edits");
    assert!(dir.read("c.tsv.new").contains("meta\tlowercase\ttrue"));

    // Unchanged, it is replaced as asked.
    lexiclade(
        dir.path(),
        &["count", "raw.txt", "--out", "c.tsv", "--force", "-q"],
    )
    .ok();
    assert!(dir.read("c.tsv").contains("meta\tlowercase\tfalse"));
}

/// Two runs to one output: the first to commit wins, the other says so
/// (exit code 2) and keeps its result beside it; nothing is lost. Without
/// --force the loser finds that the output appeared; with it, that the
/// output it was to replace changed.
#[test]
#[cfg(unix)]
fn two_runs_to_one_output_one_wins() {
    let dir = setup();
    for force in [false, true] {
        let mut args =
            vec!["cluster", "raw.txt", "--out", "oc", "--classes", "8", "-q"];
        if force {
            args.push("--force");
        }
        let mut children = [
            start_gated(dir.path(), &args, "oc"),
            start_gated(dir.path(), &args, "oc"),
        ];
        wait_at_gate(dir.path(), "oc", 2, &mut children);
        release(dir.path(), "oc");
        let runs: Vec<Run> = children.into_iter().map(finish).collect();
        let won: Vec<&Run> = runs.iter().filter(|r| r.status == 0).collect();
        assert_eq!(
            won.len(),
            1,
            "{:?}",
            runs.iter().map(|r| &r.stderr).collect::<Vec<_>>()
        );
        let lost = runs.into_iter().find(|r| r.status != 0).unwrap();
        let why = if force { "changed" } else { "appeared" };
        lost.user_error(&format!("oc: {why} while this run was writing it"));
        assert_eq!(
            dir.read("oc/clusters.tsv"),
            dir.read("oc.new/clusters.tsv")
        );
        assert_eq!(
            names(dir.path()).iter().filter(|n| n.starts_with("oc")).count(),
            2
        );
        std::fs::remove_dir_all(dir.join("oc.new")).unwrap();
        clear_gate(dir.path());
    }
}

/// SIGTERM and SIGHUP clean up as SIGINT does and exit with 128 plus the
/// signal's number: the run is stopped at its commit (its temporary
/// output complete and registered), the previous output stays as it was
/// and no temporary is left.
#[test]
#[cfg(unix)]
fn sigterm_and_sighup_remove_the_temporary_output() {
    let dir = setup();
    let cases: [(&str, &[&str]); 3] = [
        (
            "oc",
            &[
                "cluster",
                "raw.txt",
                "--out",
                "oc",
                "--classes",
                "8",
                "--force",
                "-q",
            ],
        ),
        (
            "m.bin",
            &[
                "train",
                "--train",
                "train.conll",
                "--model",
                "m.bin",
                "--force",
                "-q",
            ],
        ),
        (
            "r",
            &["ablate", "--config", "exp.toml", "--out", "r", "--force", "-q"],
        ),
    ];
    lexiclade(
        dir.path(),
        &["cluster", "raw.txt", "--out", "oc", "--classes", "4", "-q"],
    )
    .ok();
    lexiclade(
        dir.path(),
        &["ablate", "--config", "exp.toml", "--out", "r", "-q"],
    )
    .ok();
    let before = names(dir.path());
    let contents = |d: &Dir| {
        (
            d.read("oc/clusters.tsv"),
            std::fs::read(d.join("m.bin")).unwrap(),
            d.read("r/summary.md"),
        )
    };
    let old = contents(&dir);
    for (signal, code) in [("TERM", 143), ("HUP", 129), ("INT", 130)] {
        for (out, args) in cases {
            let mut child = [start_gated(dir.path(), args, out)];
            wait_at_gate(dir.path(), out, 1, &mut child);
            let [child] = child;
            let killed = Command::new("kill")
                .args([&format!("-{signal}"), &child.id().to_string()])
                .status()
                .unwrap();
            assert!(killed.success());
            let run = finish(child);
            assert_eq!(run.status, code, "{signal} {args:?}: {}", run.stderr);
            assert_eq!(run.stderr.lines().count(), 1, "{}", run.stderr);
            assert!(
                run.stderr.contains("unfinished outputs were removed"),
                "{}",
                run.stderr
            );
            assert_eq!(names(dir.path()), before, "{signal} {args:?}");
            assert!(
                contents(&dir) == old,
                "{signal} {args:?} changed the old output"
            );
            clear_gate(dir.path());
        }
    }
}

/// A SIGHUP that was ignored at the start (`nohup`) stays ignored.
#[test]
#[cfg(unix)]
fn an_ignored_sighup_stays_ignored() {
    let dir = setup();
    let gate = dir.join("gate");
    std::fs::create_dir(&gate).unwrap();
    std::fs::write(gate.join("oc.hold"), "").unwrap();
    let child = Command::new("sh")
        .args([
            "-c",
            "trap '' HUP; exec \"$@\"",
            "sh",
            env!("CARGO_BIN_EXE_lexiclade"),
        ])
        .args(["cluster", "raw.txt", "--out", "oc", "--classes", "8", "-q"])
        .current_dir(dir.path())
        .env("LEXICLADE_TEST_COMMIT_GATE", &gate)
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut child = [child];
    wait_at_gate(dir.path(), "oc", 1, &mut child);
    let [child] = child;
    assert!(Command::new("kill")
        .args(["-HUP", &child.id().to_string()])
        .status()
        .unwrap()
        .success());
    std::thread::sleep(Duration::from_millis(200));
    release(dir.path(), "oc");
    finish(child).ok();
    assert!(dir.join("oc/clusters.tsv").is_file());
}

/// `--threads` is refused above 1,024 (and at 0) in every command that
/// has it, with one line naming the option; 1,024 itself runs.
#[test]
fn threads_are_bounded() {
    let dir = setup();
    let commands: [&[&str]; 3] = [
        &["cluster", "raw.txt", "--out", "o2", "--classes", "4", "-q"],
        &["ablate", "--config", "exp.toml", "--out", "r2", "-q"],
        &["bench", "--quick"],
    ];
    for args in commands {
        for n in ["1025", "100000", "0"] {
            let mut all = args.to_vec();
            all.extend(["--threads", n]);
            lexiclade(dir.path(), &all).user_error(&format!(
                "--threads must be between 1 and 1024, got {n}"
            ));
        }
    }
    assert!(!dir.join("o2").exists() && !dir.join("r2").exists());
    lexiclade(
        dir.path(),
        &[
            "cluster",
            "raw.txt",
            "--out",
            "o2",
            "--classes",
            "4",
            "--threads",
            "1024",
            "-q",
        ],
    )
    .ok();
}

/// The mode of every output under a umask of 027: files 0640 and
/// directories 0750, as a new file and a new directory get; a file
/// replaced with --force too (not the old file's 0600).
#[test]
#[cfg(unix)]
fn outputs_honour_the_umask() {
    use std::os::unix::fs::PermissionsExt;
    let dir = setup();
    dir.write("old.tsv", "old");
    std::fs::set_permissions(
        dir.join("old.tsv"),
        std::fs::Permissions::from_mode(0o600),
    )
    .unwrap();
    let mut commands: Vec<Vec<&str>> =
        WRITERS.iter().map(|(_, a)| a.to_vec()).collect();
    commands
        .push(vec!["count", "raw.txt", "--out", "old.tsv", "--force", "-q"]);
    for args in &commands {
        let out = Command::new("sh")
            .args([
                "-c",
                "umask 027; exec \"$@\"",
                "sh",
                env!("CARGO_BIN_EXE_lexiclade"),
            ])
            .args(args)
            .current_dir(dir.path())
            .output()
            .unwrap();
        Run::from(out).ok();
    }
    let mut outputs: Vec<PathBuf> = WRITERS
        .iter()
        .map(|(o, _)| dir.join(o))
        .chain([dir.join("old.tsv")])
        .collect();
    let mut checked = 0;
    while let Some(path) = outputs.pop() {
        let mode =
            std::fs::metadata(&path).unwrap().permissions().mode() & 0o777;
        if path.is_dir() {
            assert_eq!(mode, 0o750, "{}", path.display());
            outputs.extend(
                std::fs::read_dir(&path).unwrap().map(|e| e.unwrap().path()),
            );
        } else {
            assert_eq!(mode, 0o640, "{}", path.display());
        }
        checked += 1;
    }
    // The outputs, the files of the three output directories and the
    // demo's cluster directory.
    assert!(checked > 30, "{checked}");
}

/// `count --out -` writes the count file to standard output, the same
/// bytes as to a file, and no file named `-`.
#[test]
fn count_to_standard_output() {
    let dir = setup();
    let run = lexiclade(dir.path(), &["count", "raw.txt", "--out", "-"]).ok();
    assert!(
        run.stderr.ends_with("; wrote standard output\n"),
        "{}",
        run.stderr
    );
    lexiclade(dir.path(), &["count", "raw.txt", "--out", "c.tsv", "-q"]).ok();
    assert_eq!(run.stdout, dir.read("c.tsv"));
    assert!(!dir.join("-").exists());
}

/// The messages of point 9 of the issue: the right subject and no
/// 5,000-character path.
#[test]
fn messages_name_the_right_thing() {
    let dir = setup();
    // Class paths that are not prefix-free: every reader of the cluster
    // directory refuses it, naming clusters.tsv and its line, briefly.
    std::fs::create_dir(dir.join("bad")).unwrap();
    std::fs::copy(dir.join("cl/summary.json"), dir.join("bad/summary.json"))
        .unwrap();
    // The class of the last row gets the first row's path and 5,000
    // more bits: the first row's path is a prefix of it.
    let tsv = dir.read("cl/clusters.tsv");
    let mut rows: Vec<Vec<String>> = tsv
        .lines()
        .map(|l| l.split('\t').map(String::from).collect())
        .collect();
    let (first, last) = (rows[1].clone(), rows[rows.len() - 1].clone());
    assert_ne!(first[2], last[2]);
    let long = format!("{}{}", first[1], "0".repeat(5_000));
    for row in rows.iter_mut().skip(1).filter(|r| r[2] == last[2]) {
        row[1] = long.clone();
    }
    let lines: Vec<String> = rows.iter().map(|r| r.join("\t")).collect();
    dir.write("bad/clusters.tsv", lines.join("\n") + "\n");
    let uses: [&[&str]; 3] = [
        &["show", "bad", "--svg", "x.svg"],
        &[
            "train",
            "--train",
            "train.conll",
            "--model",
            "x.bin",
            "--clusters",
            "bad",
            "--config",
            "ner.toml",
        ],
        &[
            "featurize",
            "train.conll",
            "--config",
            "ner.toml",
            "--clusters",
            "bad",
        ],
    ];
    for args in uses {
        let run = lexiclade(dir.path(), args)
            .user_error("class paths are not prefix-free");
        assert!(
            run.stderr.starts_with("lexiclade: bad/clusters.tsv:"),
            "{}",
            run.stderr
        );
        let bits = format!("({} bits)", long.len());
        assert!(run.stderr.contains(&bits), "{}", run.stderr);
        assert!(run.stderr.len() < 200, "{}", run.stderr);
    }
    assert!(!dir.join("x.svg").exists() && !dir.join("x.bin").exists());

    // A config that needs clusters, without them: the config is named.
    lexiclade(dir.path(), &["train", "--train", "train.conll", "--model", "x.bin", "--config", "ner.toml"])
        .user_error("lexiclade: ner.toml: sets clusters.enabled = true, so --clusters DIR is needed");

    // The same in an experiment: refused before any run, naming the
    // feature config.
    dir.write(
        "needs.toml",
        "[data]\ntrain = \"train.conll\"\ndev = \"train.conll\"\n\
         test = \"train.conll\"\n[[features]]\nname = \"x\"\n\
         config = \"ner.toml\"\n\
         [training]\nsizes = [30]\nseeds = [1]\nepochs = 1\nrounds = 10\n",
    );
    lexiclade(dir.path(), &["ablate", "--config", "needs.toml", "--out", "r3", "-q"])
        .user_error(
            "lexiclade: ner.toml: sets clusters.enabled = true, but feature set \"x\" has no clusters",
        );
    assert!(!dir.join("r3").exists());

    // Counting an empty file says what count does.
    lexiclade(dir.path(), &["count", "empty.txt", "--out", "c.tsv"])
        .user_error("lexiclade: empty.txt: no tokens to count");
    assert!(!dir.join("c.tsv").exists());

    // `show --levels 100000` says how many levels there were to draw.
    let depth = dir
        .read("cl/clusters.tsv")
        .lines()
        .skip(1)
        .map(|l| l.split('\t').nth(1).unwrap().len())
        .max()
        .unwrap();
    let run = lexiclade(
        dir.path(),
        &["show", "cl", "--svg", "t.svg", "--levels", "100000"],
    )
    .ok();
    assert_eq!(
        run.stderr,
        format!(
            "lexiclade: drew the top {depth} levels of the hierarchy into t.svg \
             (--levels 100000: the tree is no deeper)\n"
        )
    );

    // `tag --plain` on empty input is refused, as column mode refuses it.
    lexiclade(dir.path(), &["tag", "--model", "m.bin", "empty.txt"])
        .user_error("empty.txt: no token rows");
    lexiclade(
        dir.path(),
        &["tag", "--model", "m.bin", "--plain", "empty.txt"],
    )
    .user_error("lexiclade: empty.txt: no tokens to tag");
    lexiclade_stdin(
        dir.path(),
        &["tag", "--model", "m.bin", "--plain", "-"],
        b"\n  \n",
    )
    .user_error("lexiclade: -: no tokens to tag");
    lexiclade(
        dir.path(),
        &["tag", "--model", "m.bin", "--plain", "empty.txt", "--out", "t.txt"],
    )
    .user_error("no tokens to tag");
    assert!(!dir.join("t.txt").exists());
}
