//! `lexiclade featurize`: feature lines with and without clusters, the
//! shipped configs, output files and errors.

use crate::util::{lexiclade, lexiclade_stdin, repo, Dir};

const TEXT: &str = "the cat sat on the mat\nthe dog sat on the rug\n\
                    a cat ran to the door\na dog ran to the gate\n";

/// Two sentences after a document marker; `zebra` is not clustered.
const COLUMNS: &str = "-DOCSTART- -X- O O\n\nthe DT O\ncat NN O\nsat VBD \
                       O\n\n\na DT O\nzebra NN B-ANIMAL\n";

/// A few templates only, so that whole lines can be written out.
const CONFIG: &str = "\
[clusters]
prefix_lengths = [1, 3]
window = [0, 1]

[lexical]
lowercase = false
char_prefixes = false
char_suffixes = false
case_flags = false
char_flags = false
neighbour_offsets = [-1]
";

/// A directory with the text clustered into `clusters/`, the columns
/// and the config.
fn setup() -> Dir {
    let dir = Dir::new();
    dir.write("t.txt", TEXT);
    dir.write("t.conll", COLUMNS);
    dir.write("f.toml", CONFIG);
    lexiclade(
        dir.path(),
        &["cluster", "t.txt", "--out", "clusters", "--classes", "4", "-q"],
    )
    .ok();
    dir
}

/// The path of `word` in `dir`'s clusters.
fn path_of(dir: &Dir, word: &str) -> String {
    let clusters = dir.read("clusters/clusters.tsv");
    let row = clusters
        .lines()
        .map(|l| l.split('\t').collect::<Vec<_>>())
        .find(|r| r[0] == word)
        .unwrap_or_else(|| panic!("{word} not clustered"));
    row[1].to_string()
}

/// The first `n` characters of a path, or all of it.
fn prefix(path: &str, n: usize) -> &str {
    &path[..n.min(path.len())]
}

#[test]
fn lines_with_clusters() {
    let dir = setup();
    let args = [
        "featurize",
        "--config",
        "f.toml",
        "--clusters",
        "clusters",
        "t.conll",
    ];
    let out = lexiclade(dir.path(), &args).ok().stdout;
    let (the, cat, sat, a) = (
        path_of(&dir, "the"),
        path_of(&dir, "cat"),
        path_of(&dir, "sat"),
        path_of(&dir, "a"),
    );
    let want = [
        format!(
            "the\tbias\tw=the\tshape=x\tw[-1]:start\tp1[0]={}\tp3[0]={}\t\
             p1[+1]={}\tp3[+1]={}",
            prefix(&the, 1),
            prefix(&the, 3),
            prefix(&cat, 1),
            prefix(&cat, 3)
        ),
        format!(
            "cat\tbias\tw=cat\tshape=x\tw[-1]=the\tp1[0]={}\tp3[0]={}\t\
             p1[+1]={}\tp3[+1]={}",
            prefix(&cat, 1),
            prefix(&cat, 3),
            prefix(&sat, 1),
            prefix(&sat, 3)
        ),
        format!(
            "sat\tbias\tw=sat\tshape=x\tw[-1]=cat\tp1[0]={}\tp3[0]={}\t\
             path[+1]:end",
            prefix(&sat, 1),
            prefix(&sat, 3)
        ),
        String::new(),
        format!(
            "a\tbias\tw=a\tshape=x\tw[-1]:start\tp1[0]={}\tp3[0]={}\t\
             path[+1]:none",
            prefix(&a, 1),
            prefix(&a, 3)
        ),
        "zebra\tbias\tw=zebra\tshape=x\tw[-1]=a\tpath[0]:none\t\
         path[+1]:end"
            .to_string(),
        String::new(),
    ];
    assert_eq!(out.lines().collect::<Vec<_>>(), want);
    assert!(out.ends_with("\n\n"));
}

#[test]
fn lines_without_clusters() {
    let dir = setup();
    let out =
        lexiclade(dir.path(), &["featurize", "--config", "f.toml", "t.conll"])
            .ok()
            .stdout;
    let want = "the\tbias\tw=the\tshape=x\tw[-1]:start\n\
                cat\tbias\tw=cat\tshape=x\tw[-1]=the\n\
                sat\tbias\tw=sat\tshape=x\tw[-1]=cat\n\
                \n\
                a\tbias\tw=a\tshape=x\tw[-1]:start\n\
                zebra\tbias\tw=zebra\tshape=x\tw[-1]=a\n\
                \n";
    assert_eq!(out, want);
    // Standard input and `--out -` give the same.
    let run = lexiclade_stdin(
        dir.path(),
        &["featurize", "--config", "f.toml", "-", "--out", "-"],
        COLUMNS.as_bytes(),
    )
    .ok();
    assert_eq!(run.stdout, want);
}

#[test]
fn shipped_configs_and_their_baselines() {
    let dir = setup();
    let config = |name: &str| {
        repo().join("configs").join(name).to_string_lossy().into_owned()
    };
    let ner = config("ner.toml");
    let run = |args: &[&str]| {
        let mut all = vec!["featurize", "t.conll", "--config"];
        all.extend(args);
        lexiclade(dir.path(), &all)
    };
    let with = run(&[&ner, "--clusters", "clusters"]).ok().stdout;
    let the = path_of(&dir, "the");
    let first = with.lines().next().unwrap();
    assert!(
        first.starts_with("the\tbias\tw=the\tlw=the\tpre1=t\t"),
        "{first}"
    );
    for n in [4, 6, 10, 20] {
        let feature = format!("\tp{n}[0]={}\t", prefix(&the, n));
        assert!(first.contains(&feature), "{feature} not in {first}");
    }
    assert!(with.contains("\tpath[0]:none\t"));
    // The NER config requires clusters.
    run(&[&ner]).user_error("--clusters DIR is needed");

    let baseline = config("ner-no-clusters.toml");
    let without = run(&[&baseline]).ok().stdout;
    assert!(!without.contains("p4[") && !without.contains("path["));
    // The same lexical features in the same order.
    let strip: Vec<String> = with
        .lines()
        .map(|l| {
            l.split('\t')
                .filter(|f| !f.starts_with('p') || f.starts_with("pre"))
                .collect::<Vec<_>>()
                .join("\t")
        })
        .collect();
    assert_eq!(strip, without.lines().collect::<Vec<_>>());
    // Clusters given to a baseline are unused, with a notice.
    let noticed = run(&[&baseline, "--clusters", "clusters"]).ok();
    assert_eq!(noticed.stdout, without);
    assert!(noticed.stderr.contains("is not used"), "{}", noticed.stderr);

    let pos = run(&[&config("pos.toml"), "--clusters", "clusters"]).ok();
    assert!(pos.stdout.contains("\tp2[0]="));
    run(&[&config("pos-no-clusters.toml")]).ok();
}

#[test]
fn out_file_is_written_whole_and_never_over_an_input() {
    let dir = setup();
    let args = ["featurize", "--config", "f.toml", "t.conll"];
    let stdout = lexiclade(dir.path(), &args).ok().stdout;
    let run = |extra: &[&str]| {
        let mut all = args.to_vec();
        all.extend(extra);
        lexiclade(dir.path(), &all)
    };
    run(&["--out", "feats.tsv", "--quiet"]).ok();
    assert_eq!(dir.read("feats.tsv"), stdout);
    run(&["--out", "feats.tsv"]).user_error("feats.tsv: exists");
    run(&["--out", "feats.tsv", "--force", "-q"]).ok();
    let mut names: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .collect();
    names.sort();
    assert_eq!(names, ["clusters", "f.toml", "feats.tsv", "t.conll", "t.txt"]);

    run(&["--out", "t.conll", "--force"]).user_error("would overwrite");
    run(&["--out", "f.toml", "--force"]).user_error("would overwrite");
    assert_eq!(dir.read("t.conll"), COLUMNS);
}

#[test]
fn config_errors_are_one_line_with_exit_code_2() {
    let dir = setup();
    let run = |config: &str| {
        lexiclade(dir.path(), &["featurize", "--config", config, "t.conll"])
    };
    dir.write("unknown.toml", "min_count = 1\n[lexical]\nshapes = true\n");
    let e = run("unknown.toml").user_error("unknown.toml:3: ");
    assert!(e.stderr.contains("shapes"), "{}", e.stderr);
    dir.write("top.toml", "iobse = false\n");
    run("top.toml").user_error("iobse");
    run("missing.toml").user_error("missing.toml");
    dir.write("range.toml", "[clusters]\nwindow = [0, 9]\n");
    run("range.toml").user_error(
        "range.toml: invalid clusters.window: offset 9 is outside -5..=5",
    );
    dir.write("syntax.toml", "[lexical\n");
    run("syntax.toml").user_error("syntax.toml:1: ");
    let args = [
        "featurize",
        "--config",
        "f.toml",
        "--clusters",
        "nowhere",
        "t.conll",
    ];
    lexiclade(dir.path(), &args).user_error("nowhere");
}

#[test]
fn input_errors_are_one_line_with_exit_code_2() {
    let dir = setup();
    let run = |input: &str| {
        lexiclade(dir.path(), &["featurize", "--config", "f.toml", input])
    };
    dir.write("bad.conll", b"the DT\n\ncat\xff NN\n".as_slice());
    run("bad.conll").user_error("bad.conll:3: invalid UTF-8");
    dir.write("empty.conll", "");
    run("empty.conll").user_error("empty.conll: no token rows");
    dir.write("blank.conll", "\n-DOCSTART- O\n \n");
    run("blank.conll").user_error("blank.conll: no token rows");
    run("absent.conll").user_error("absent.conll");
    // CRLF and a byte-order mark read as plain lines.
    let crlf = format!("\u{feff}{}", COLUMNS.replace('\n', "\r\n"));
    dir.write("crlf.conll", crlf);
    assert_eq!(run("crlf.conll").ok().stdout, run("t.conll").ok().stdout);
}

#[test]
fn columns_conjunctions_and_cluster_sets_show() {
    let dir = setup();
    dir.write(
        "x.toml",
        "[clusters]\nenabled = false\n\
         [lexical]\nword = false\nlowercase = false\nchar_prefixes = false\n\
         char_suffixes = false\nshape = false\ncase_flags = false\n\
         char_flags = false\nneighbours = false\n\
         [[cluster_sets]]\nname = \"lc\"\nprefix_lengths = [1]\nwindow = [0]\n\
         [[columns]]\nname = \"pos\"\ncolumn = 2\nwindow = [-1]\nngrams = [[0, 1]]\n\
         [[conjunctions]]\nname = \"wp\"\nparts = [\"word\", \"pos[+1]\"]\n",
    );
    let run = lexiclade(
        dir.path(),
        &[
            "featurize",
            "t.conll",
            "--config",
            "x.toml",
            "--clusters",
            "lc=clusters",
        ],
    )
    .ok();
    let the = prefix(&path_of(&dir, "the"), 1).to_string();
    let cat = prefix(&path_of(&dir, "cat"), 1).to_string();
    let sat = prefix(&path_of(&dir, "sat"), 1).to_string();
    let a = prefix(&path_of(&dir, "a"), 1).to_string();
    let want = format!(
        "the\tbias\tlc.p1[0]={the}\tpos[-1]:start\tpos[0,+1]=DT|NN\twp=the|NN\n\
         cat\tbias\tlc.p1[0]={cat}\tpos[-1]=DT\tpos[0,+1]=NN|VBD\twp=cat|VBD\n\
         sat\tbias\tlc.p1[0]={sat}\tpos[-1]=NN\tpos[0,+1]=VBD|\\end\twp=sat|\\end\n\n\
         a\tbias\tlc.p1[0]={a}\tpos[-1]:start\tpos[0,+1]=DT|NN\twp=a|NN\n\
         zebra\tbias\tlc.path[0]:none\tpos[-1]=DT\tpos[0,+1]=NN|\\end\twp=zebra|\\end\n\n"
    );
    assert_eq!(run.stdout, want);
    // A set the config does not have, a set given twice, a missing
    // column, the token column from the end.
    lexiclade(
        dir.path(),
        &[
            "featurize",
            "t.conll",
            "--config",
            "x.toml",
            "--clusters",
            "uc=clusters",
        ],
    )
    .user_error("--clusters uc=clusters: x.toml has no cluster set \"uc\"");
    lexiclade(
        dir.path(),
        &[
            "featurize",
            "t.conll",
            "--config",
            "x.toml",
            "--clusters",
            "lc=clusters",
            "--clusters",
            "lc=clusters",
        ],
    )
    .user_error("--clusters lc=DIR is given twice");
    dir.write("one.conll", "the\tDT\ncat\tNN\n\nsat\n");
    lexiclade(dir.path(), &["featurize", "one.conll", "--config", "x.toml", "--out", "o.txt"])
        .user_error("one.conll:4: the features read column 2 (pos), but the row has 1 column");
    assert!(!dir.join("o.txt").exists());
    // Nothing on standard output either, though the first sentence is
    // fine.
    let run = lexiclade(
        dir.path(),
        &["featurize", "one.conll", "--config", "x.toml"],
    )
    .user_error("one.conll:4:");
    assert_eq!(run.stdout, "");
    let run = lexiclade(
        dir.path(),
        &[
            "featurize",
            "t.conll",
            "--config",
            "x.toml",
            "--token-column",
            "-1",
        ],
    )
    .ok();
    assert!(
        run.stdout
            .starts_with("O\tbias\tpos[-1]:start\tpos[0,+1]=DT|NN\twp=O|NN\n"),
        "{}",
        run.stdout
    );
}
