//! The embedded demo: radio logs of the Vell Valley Barge Line, a
//! freight company invented for this demo, generated deterministically.
//!
//! Skippers radio short notes about barges, locks and quays, cargo, days
//! and times. Words of one kind (barge names, places, cargo, skippers,
//! days, numbers) occur in the same kinds of context, which is what the
//! clustering should find. Nothing here describes real places or people.

use std::path::Path;

use anyhow::{bail, Context, Result};
use lexiclade_cluster::{
    cluster, ClusterOutput, ClusterParams, ClusterTable, Counts,
};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use crate::atomic::AtomicDir;
use crate::experiment::{
    self,
    config::{Clusters, Data, Experiment, FeatureSet, Training},
    report::{self, Comparison},
};

/// The file in a demo directory that marks it as one, so that `demo`
/// may replace it without `--force`.
pub const MARKER: &str = "lexiclade-demo.txt";

/// Every file [`run`] writes, by its path in the output directory. A
/// directory with the marker and nothing else is an earlier demo's and
/// is replaced without `--force`; anything else in it (a file a user
/// added) makes `demo` refuse it.
pub const FILES: [&str; 16] = [
    "clusters/clusters.tsv",
    "clusters/merges.tsv",
    "clusters/summary.json",
    "dev.conll",
    "learning-curve.svg",
    MARKER,
    "ner-no-clusters.toml",
    "ner.toml",
    "prefixes.svg",
    "raw.txt",
    "runs.csv",
    "savings.csv",
    "summary.json",
    "summary.md",
    "test.conll",
    "train.conll",
];

/// Whether `out` may be replaced: with `force`, or when it holds an
/// earlier demo's output and nothing else. A directory without the
/// marker is left to [`AtomicDir::create`], which refuses it unless it
/// is empty.
fn replaceable(out: &Path, force: bool) -> Result<bool> {
    if force || !out.join(MARKER).is_file() {
        return Ok(force);
    }
    let mut stack = vec![std::path::PathBuf::new()];
    while let Some(below) = stack.pop() {
        let entries = std::fs::read_dir(out.join(&below))
            .with_context(|| out.join(&below).display().to_string())?;
        for entry in entries {
            let entry = entry
                .with_context(|| out.join(&below).display().to_string())?;
            let rel = below.join(entry.file_name());
            let is_dir = entry.file_type().is_ok_and(|t| t.is_dir());
            let known = if is_dir {
                FILES.iter().any(|f| Path::new(f).starts_with(&rel))
            } else {
                FILES.iter().any(|f| Path::new(f) == rel)
            };
            if !known {
                bail!(
                    "{}: holds {}, which `lexiclade demo` does not write \
                     (use --force to replace the directory anyway)",
                    out.display(),
                    rel.display()
                );
            }
            if is_dir {
                stack.push(rel);
            }
        }
    }
    Ok(true)
}

/// What the demo learned, for the report.
pub struct DemoReport {
    /// Sentences of raw text.
    pub sentences: u64,
    /// Tokens of raw text.
    pub tokens: u64,
    /// Distinct words.
    pub types: u64,
    /// Classes learned.
    pub classes: usize,
    /// AMI of the classes, in bits.
    pub ami_bits: f64,
    /// A few words with their path and nearest neighbours.
    pub neighbours: Vec<(String, String, Vec<String>)>,
    /// Labeled sentences: train, dev, test.
    pub labeled: [usize; 3],
    /// The comparisons of the ablation (baseline first).
    pub comparisons: Vec<Comparison>,
    /// The experiment that was run (its paths pointed into the
    /// temporary directory that became the output).
    pub experiment: Experiment,
    /// The summary written to `summary.md`.
    pub summary: String,
}

/// Settings of a demo run.
pub struct DemoParams {
    /// Sentences of raw text to generate (default 4,000).
    pub sentences: usize,
    /// Classes to learn (default 24).
    pub classes: usize,
    /// The seed of the generated text (default 1).
    pub seed: u64,
    /// Labeled training sentences (default 400; dev and test get 200).
    pub labeled: usize,
    /// Training sizes of the learning curve below the whole set
    /// (default 50, 100, 200).
    pub sizes: Vec<usize>,
    /// Seeds of the ablation (default 1, 2, 3).
    pub seeds: Vec<u64>,
    /// Epochs per run (default 5).
    pub epochs: usize,
    /// Rounds of the randomization test (default 2,000).
    pub rounds: usize,
    /// Use the tag dictionary (default false: with so few names, the
    /// dictionary pins the frequent ones and their features stop
    /// learning, which hides what clusters do for the rare ones).
    pub prune: bool,
}

impl Default for DemoParams {
    fn default() -> Self {
        DemoParams {
            sentences: 4_000,
            classes: 24,
            seed: 1,
            labeled: 400,
            sizes: vec![50, 100, 200],
            seeds: vec![1, 2, 3],
            epochs: 5,
            rounds: 2_000,
            prune: false,
        }
    }
}

/// The share of each list of names the labeled training set uses: the
/// other names occur only in the raw text and in the test set, which is
/// where clusters can help.
const KNOWN_NAMES: f64 = 0.5;

/// Generates the demo text, clusters it, runs the ablation with and
/// without cluster features and writes everything into `out`
/// (`raw.txt`, the labeled files, the feature configs, the cluster
/// directory `clusters/` and the files of `ablate`), atomically.
pub fn run(
    out: &Path,
    force: bool,
    params: &DemoParams,
) -> Result<DemoReport> {
    let dir = AtomicDir::create(out, replaceable(out, force)?)?;
    let root = dir.path();
    let text = corpus(params.sentences, params.seed);
    std::fs::write(root.join("raw.txt"), &text)?;
    std::fs::write(
        root.join(MARKER),
        "Written by `lexiclade demo`; `demo` replaces this directory.\n",
    )?;
    let counts = Counts::from_text(&text, Default::default(), 1);
    let cluster_params = ClusterParams { classes: params.classes };
    let hierarchy = cluster(&counts, &cluster_params, &mut |_| {})?;
    let clusters = root.join("clusters");
    std::fs::create_dir(&clusters)?;
    ClusterOutput { counts: &counts, hierarchy: &hierarchy }
        .write_dir(&clusters, crate::VERSION)?;
    let table = ClusterTable::read(&clusters)?;
    let neighbours =
        ["Heron", "Cressfold", "slate", "Ada", "Tuesday", "three"]
            .iter()
            .filter_map(|&word| {
                let k = table.find(word)?;
                let near = table
                    .nearest(k, 5)
                    .into_iter()
                    .map(|n| table.entries[n].word.clone())
                    .collect();
                Some((word.to_string(), table.entries[k].path.clone(), near))
            })
            .collect();

    let seed = params.seed.wrapping_mul(1000);
    let files = [
        ("train.conll", labeled(params.labeled, seed + 1, KNOWN_NAMES)),
        ("dev.conll", labeled(params.labeled / 2, seed + 2, 1.0)),
        ("test.conll", labeled(params.labeled / 2, seed + 3, 1.0)),
    ];
    for (name, body) in &files {
        std::fs::write(root.join(name), body)?;
    }
    std::fs::write(root.join("ner.toml"), NER_CONFIG)?;
    std::fs::write(root.join("ner-no-clusters.toml"), NER_BASELINE)?;
    let experiment = Experiment {
        data: Data {
            train: root.join("train.conll"),
            dev: root.join("dev.conll"),
            test: root.join("test.conll"),
            scheme: Some("iob2".into()),
            token_column: 1,
            label_column: -1,
        },
        clusters: Some(Clusters {
            dir: Some(clusters.clone()),
            raw: Vec::new(),
            classes: params.classes,
            min_count: 1,
            tokenize: false,
            lowercase: false,
            exchange_passes: 0,
        }),
        cluster_sets: Default::default(),
        features: vec![
            FeatureSet {
                name: "no clusters".into(),
                config: root.join("ner-no-clusters.toml"),
                prefixes: None,
                whole_path: None,
                clusters: None,
                cluster_sets: Default::default(),
            },
            FeatureSet {
                name: "clusters".into(),
                config: root.join("ner.toml"),
                prefixes: None,
                whole_path: None,
                clusters: None,
                cluster_sets: Default::default(),
            },
        ],
        training: Training {
            sizes: params.sizes.clone(),
            all: true,
            seeds: params.seeds.clone(),
            epochs: params.epochs,
            rounds: params.rounds,
            alpha: 0.05,
            baseline: None,
            prune: params.prune,
            refit: false,
        },
    };
    experiment.check()?;
    let data = experiment::run::prepare(&experiment, &mut |_| {})?;
    let runs = experiment::run::run(&experiment, &data, true, &|_| {});
    if let Some(bad) = runs.iter().find_map(|r| r.error.as_deref()) {
        bail!("a demo run failed: {bad}");
    }
    let comparisons = report::compare(&experiment, data.scheme, &runs);
    report::write_runs(&experiment, &runs, &root.join("runs.csv"))?;
    report::write_summary_json(
        &experiment,
        data.scheme,
        &runs,
        &root.join("summary.json"),
    )?;
    report::write_savings(
        &experiment,
        &comparisons,
        &root.join("savings.csv"),
    )?;
    let summary =
        report::summary(&experiment, data.scheme, &runs, &comparisons);
    std::fs::write(root.join("summary.md"), &summary)?;
    report::draw(&experiment, data.scheme, &comparisons, root)?;
    dir.commit()?;
    Ok(DemoReport {
        sentences: counts.sentences,
        tokens: counts.tokens,
        types: counts.types,
        classes: hierarchy.classes,
        ami_bits: hierarchy.ami_bits,
        neighbours,
        labeled: [data.train.len(), data.dev.len(), data.test.len()],
        comparisons,
        experiment,
        summary,
    })
}

/// The shipped NER feature configs, copied into the demo directory.
const NER_CONFIG: &str = include_str!("../configs/ner.toml");
const NER_BASELINE: &str = include_str!("../configs/ner-no-clusters.toml");

/// The barges of the line.
pub const VESSELS: &[&str] = &[
    "Heron", "Kestrel", "Marten", "Otter", "Plover", "Sorrel", "Tansy",
    "Wren", "Bittern", "Grebe", "Lapwing", "Merlin", "Ousel", "Teal",
    "Whimbrel", "Dunlin", "Shrike", "Linnet",
];

/// Locks, quays and towns along the river.
pub const PLACES: &[&str] = &[
    "Cressfold",
    "Amberley",
    "Tollmouth",
    "Marrowlock",
    "Hobbsquay",
    "Lindenweir",
    "Eskferry",
    "Brackwater",
    "Fennick",
    "Olderbridge",
    "Saltmead",
    "Wickhollow",
    "Quarrington",
    "Ravelston",
    "Dunmere",
    "Gorsebank",
];

/// What the barges carry.
pub const CARGO: &[&str] = &[
    "slate", "timber", "barley", "coal", "wool", "lime", "cider", "bricks",
    "salt", "hemp", "gravel", "flour", "iron", "peat",
];

/// The skippers and lock keepers.
pub const PEOPLE: &[&str] = &[
    "Ada", "Bram", "Corin", "Della", "Edric", "Fenna", "Gus", "Hild", "Ivo",
    "Jessamy", "Kit", "Lorne", "Mab", "Nye",
];

/// Days of the week.
pub const DAYS: &[&str] = &[
    "Monday",
    "Tuesday",
    "Wednesday",
    "Thursday",
    "Friday",
    "Saturday",
    "Sunday",
];

/// Counts, as words and digits.
pub const NUMBERS: &[&str] = &[
    "two", "three", "four", "five", "six", "eight", "ten", "twelve", "20",
    "40", "60", "100",
];

/// Times of day.
pub const TIMES: &[&str] =
    &["dawn", "noon", "dusk", "midnight", "first light"];

const TEMPLATES: &[&str] = &[
    "V left P at T with N crates of C .",
    "skipper S reports V moored at P .",
    "N tons of C unloaded at P on D .",
    "S asks for N hands at P by D .",
    "water high at P , V waits for the T tide .",
    "V and V passed P heading for P .",
    "lock keeper S at P says the gates open on D .",
    "V carrying C for P , due D at T .",
    "S took V downriver from P to P with C .",
    "P wharf short of C , V sent with N loads .",
    "delay at P : V aground near P since T .",
    "S relieved S on V at P on D .",
    "C prices up at P , N barges wait .",
    "V refuelled at P , skipper S on board .",
];

/// `sentences` lines of demo text for `seed`, one sentence per line,
/// tokens separated by spaces.
pub fn corpus(sentences: usize, seed: u64) -> String {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut text = String::new();
    for _ in 0..sentences {
        let template = TEMPLATES[rng.random_range(0..TEMPLATES.len())];
        let mut first = true;
        for slot in template.split(' ') {
            if !first {
                text.push(' ');
            }
            first = false;
            let word = match slot {
                "V" => skewed(&mut rng, VESSELS),
                "P" => skewed(&mut rng, PLACES),
                "C" => skewed(&mut rng, CARGO),
                "S" => skewed(&mut rng, PEOPLE),
                "D" => skewed(&mut rng, DAYS),
                "N" => skewed(&mut rng, NUMBERS),
                "T" => skewed(&mut rng, TIMES),
                literal => literal,
            };
            text.push_str(word);
        }
        text.push('\n');
    }
    text
}

/// `sentences` labeled demo sentences for `seed` as a column file:
/// token, tab, IOB2 label, a blank line after each sentence. Barges are
/// `VESSEL`, places `PLACE`, skippers and keepers `PERSON`; everything
/// else is `O`. Only the first `known` share of each list of names is
/// used (1.0 for all), so that a labeled set can leave names out that
/// the raw text has.
pub fn labeled(sentences: usize, seed: u64, known: f64) -> String {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let part = |words: &'static [&'static str]| {
        let n = ((words.len() as f64 * known).ceil() as usize)
            .clamp(1, words.len());
        &words[..n]
    };
    let (vessels, places, people) =
        (part(VESSELS), part(PLACES), part(PEOPLE));
    let mut out = String::new();
    for _ in 0..sentences {
        let template = TEMPLATES[rng.random_range(0..TEMPLATES.len())];
        for slot in template.split(' ') {
            let (words, kind) = match slot {
                "V" => (skewed(&mut rng, vessels), "VESSEL"),
                "P" => (skewed(&mut rng, places), "PLACE"),
                "S" => (skewed(&mut rng, people), "PERSON"),
                "C" => (skewed(&mut rng, CARGO), ""),
                "D" => (skewed(&mut rng, DAYS), ""),
                "N" => (skewed(&mut rng, NUMBERS), ""),
                "T" => (skewed(&mut rng, TIMES), ""),
                literal => (literal, ""),
            };
            for (k, word) in words.split(' ').enumerate() {
                let label = match (kind, k) {
                    ("", _) => "O".to_string(),
                    (kind, 0) => format!("B-{kind}"),
                    (kind, _) => format!("I-{kind}"),
                };
                out.push_str(&format!("{word}\t{label}\n"));
            }
        }
        out.push('\n');
    }
    out
}

/// A word of `words`, the first ones more often (Zipf-like, weight
/// `1 / (k + 1)`), as names are in real logs.
fn skewed<'a>(rng: &mut ChaCha8Rng, words: &[&'a str]) -> &'a str {
    let total: f64 = (1..=words.len()).map(|k| 1.0 / k as f64).sum();
    let mut u = rng.random::<f64>() * total;
    for (k, word) in words.iter().enumerate() {
        u -= 1.0 / (k + 1) as f64;
        if u <= 0.0 {
            return word;
        }
    }
    words[words.len() - 1]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn corpus_is_deterministic_and_uses_every_kind() {
        let a = corpus(500, 1);
        assert_eq!(a, corpus(500, 1));
        assert_ne!(a, corpus(500, 2));
        assert_eq!(a.lines().count(), 500);
        for word in ["Heron", "Cressfold", "slate", "Ada", "Monday", "three"] {
            assert!(a.split_whitespace().any(|w| w == word), "{word}");
        }
    }
}
