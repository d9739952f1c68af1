//! The outputs of an experiment: `runs.csv` (one row per combination),
//! `summary.md` (means, gains, significance, label savings),
//! `savings.csv`, `learning-curve.svg` and `prefixes.svg`.

use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::Path;

use anyhow::{Context, Result};

use super::config::Experiment;
use super::plots::{self, Point, Series};
use super::run::{metric, RunResult};
use super::savings::{baseline_needs, Saving};
use super::stats::{approximate_randomization, holm, mean_sd, Metric};
use lexiclade_tagger::scheme::Scheme;

/// The version of the experiment outputs (`runs.csv`, `savings.csv`),
/// recorded in the `summary.json` beside them.
pub const FORMAT_VERSION: u32 = 1;

/// Writes `summary.json`: the format version, the metric, the baseline
/// and the number of runs and failures.
pub fn write_summary_json(
    exp: &Experiment,
    scheme: Scheme,
    runs: &[RunResult],
    path: &Path,
) -> Result<()> {
    let value = serde_json::json!({
        "format_version": FORMAT_VERSION,
        "metric": if scheme.has_chunks() { "f1" } else { "token_accuracy" },
        "scheme": scheme.to_string(),
        "baseline": exp.features[exp.baseline()].name,
        "features": exp.features.iter().map(|f| f.name.clone()).collect::<Vec<_>>(),
        "seeds": exp.training.seeds,
        "refit": exp.training.refit,
        "runs": runs.len(),
        "failed": runs.iter().filter(|r| r.error.is_some()).count(),
        "version": crate::VERSION,
    });
    let text = serde_json::to_string_pretty(&value)? + "\n";
    std::fs::write(path, text).with_context(|| path.display().to_string())
}

/// The columns of `runs.csv`.
pub const RUNS_HEADER: [&str; 11] = [
    "features",
    "train_sentences",
    "seed",
    "status",
    "dev_score",
    "test_score",
    "test_accuracy",
    "test_oov_accuracy",
    "path_coverage",
    "best_epoch",
    "train_seconds",
];

/// Writes `runs.csv`.
pub fn write_runs(
    exp: &Experiment,
    runs: &[RunResult],
    path: &Path,
) -> Result<()> {
    let mut w = csv::Writer::from_path(path)?;
    w.write_record(RUNS_HEADER)?;
    for r in runs {
        let status = match &r.error {
            None => "ok".to_string(),
            Some(e) => format!("failed: {e}"),
        };
        w.write_record([
            exp.features[r.features].name.clone(),
            r.train_sentences.to_string(),
            r.seed.to_string(),
            status,
            format!("{:.6}", r.dev_score),
            format!("{:.6}", r.test_score),
            format!("{:.6}", r.test_accuracy),
            format!("{:.6}", r.test_oov_accuracy),
            format!("{:.6}", r.path_coverage),
            r.best_epoch.to_string(),
            format!("{:.3}", r.train_seconds),
        ])?;
    }
    w.flush()?;
    Ok(())
}

/// Per feature set and size: the successful runs' test scores by seed.
type Table = BTreeMap<(usize, usize), BTreeMap<u64, f64>>;

fn table(runs: &[RunResult]) -> Table {
    let mut t: Table = BTreeMap::new();
    for r in runs.iter().filter(|r| r.error.is_none()) {
        t.entry((r.features, r.train_sentences))
            .or_default()
            .insert(r.seed, r.test_score);
    }
    t
}

/// One comparison against the baseline at one size.
#[derive(Clone, Debug, PartialEq)]
pub struct Comparison {
    /// The feature set.
    pub features: usize,
    /// The training size.
    pub size: usize,
    /// Mean and standard deviation of the test score over seeds.
    pub mean: f64,
    /// Standard deviation over seeds.
    pub sd: f64,
    /// Mean score minus the baseline's mean score.
    pub gain: f64,
    /// The largest p over seeds of the paired randomization test.
    pub p: Option<f64>,
    /// Significant after Holm's correction over the feature sets at
    /// this size.
    pub significant: bool,
    /// Baseline sentences needed to reach `mean`.
    pub saving: Saving,
    /// The spread of the saving over seeds: the smallest and largest
    /// per-seed value (`None` where a seed's baseline never reaches it).
    pub saving_range: (Option<f64>, Option<f64>),
}

/// Compares every feature set with the baseline at every size.
pub fn compare(
    exp: &Experiment,
    scheme: Scheme,
    runs: &[RunResult],
) -> Vec<Comparison> {
    let base = exp.baseline();
    let t = table(runs);
    let metric = metric(scheme);
    let sizes: Vec<usize> = {
        let mut s: Vec<usize> = t.keys().map(|k| k.1).collect();
        s.sort_unstable();
        s.dedup();
        s
    };
    let curve = |seed: Option<u64>| -> Vec<(f64, f64)> {
        sizes
            .iter()
            .filter_map(|&n| {
                let scores = t.get(&(base, n))?;
                let v = match seed {
                    Some(s) => *scores.get(&s)?,
                    None => {
                        mean_sd(&scores.values().copied().collect::<Vec<_>>())
                            .0
                    }
                };
                Some((n as f64, v))
            })
            .collect()
    };
    let base_curve = curve(None);
    let mut out = Vec::new();
    for (&(f, n), scores) in &t {
        let values: Vec<f64> = scores.values().copied().collect();
        let (mean, sd) = mean_sd(&values);
        // No successful baseline run at this size: no gain (NaN, shown
        // as a dash).
        let base_mean = t.get(&(base, n)).map_or(f64::NAN, |s| {
            mean_sd(&s.values().copied().collect::<Vec<_>>()).0
        });
        let p = (f != base)
            .then(|| paired_p(exp, runs, base, f, n, metric))
            .flatten();
        let saving = baseline_needs(&base_curve, mean);
        let per_seed: Vec<Option<f64>> = scores
            .iter()
            .map(|(&s, &v)| match baseline_needs(&curve(Some(s)), v) {
                Saving::Sentences(x) => Some(x),
                Saving::BeyondLargest { .. } => None,
            })
            .collect();
        let lo = per_seed
            .iter()
            .flatten()
            .copied()
            .fold(None, |m: Option<f64>, x| Some(m.map_or(x, |m| m.min(x))));
        let hi = if per_seed.iter().any(Option::is_none) {
            None
        } else {
            per_seed
                .iter()
                .flatten()
                .copied()
                .fold(None, |m: Option<f64>, x| {
                    Some(m.map_or(x, |m| m.max(x)))
                })
        };
        out.push(Comparison {
            features: f,
            size: n,
            mean,
            sd,
            gain: mean - base_mean,
            p,
            significant: false,
            saving,
            saving_range: (lo, hi),
        });
    }
    // Holm over the feature sets compared at each size.
    for &n in &sizes {
        let idx: Vec<usize> = (0..out.len())
            .filter(|&k| out[k].size == n && out[k].p.is_some())
            .collect();
        let ps: Vec<f64> =
            idx.iter().map(|&k| out[k].p.unwrap_or(1.0)).collect();
        for (&k, h) in idx.iter().zip(holm(&ps, exp.training.alpha)) {
            out[k].significant = h.significant;
        }
    }
    out
}

/// The largest p over seeds of the paired test between the baseline and
/// feature set `f` at size `n`.
fn paired_p(
    exp: &Experiment,
    runs: &[RunResult],
    base: usize,
    f: usize,
    n: usize,
    metric: Metric,
) -> Option<f64> {
    let find = |features: usize, seed: u64| {
        runs.iter().find(|r| {
            r.features == features
                && r.train_sentences == n
                && r.seed == seed
                && r.error.is_none()
        })
    };
    let mut worst: Option<f64> = None;
    for &seed in &exp.training.seeds {
        let (Some(a), Some(b)) = (find(base, seed), find(f, seed)) else {
            continue;
        };
        let p = approximate_randomization(
            &a.sentences,
            &b.sentences,
            metric,
            exp.training.rounds,
            seed,
        );
        worst = Some(worst.map_or(p, |w: f64| w.max(p)));
    }
    worst
}

/// Writes `savings.csv`.
pub fn write_savings(
    exp: &Experiment,
    cmp: &[Comparison],
    path: &Path,
) -> Result<()> {
    let mut w = csv::Writer::from_path(path)?;
    w.write_record([
        "features",
        "train_sentences",
        "mean_score",
        "baseline_sentences",
        "beyond_largest",
        "ratio",
        "seed_min",
        "seed_max",
    ])?;
    let opt = |x: Option<f64>| x.map_or(String::new(), |v| format!("{v:.1}"));
    for c in cmp {
        // Numbers stay numbers: "beyond the largest size" is its own
        // column, with the largest size in `baseline_sentences`.
        let (needed, beyond, ratio) = match c.saving {
            Saving::Sentences(x) => (
                format!("{x:.1}"),
                "false",
                c.saving
                    .ratio(c.size as f64)
                    .map_or(String::new(), |r| format!("{r:.3}")),
            ),
            Saving::BeyondLargest { largest } => {
                (format!("{largest}"), "true", String::new())
            }
        };
        w.write_record([
            exp.features[c.features].name.clone(),
            c.size.to_string(),
            format!("{:.6}", c.mean),
            needed,
            beyond.to_string(),
            ratio,
            opt(c.saving_range.0),
            opt(c.saving_range.1),
        ])?;
    }
    w.flush()?;
    Ok(())
}

/// The text of `summary.md`.
pub fn summary(
    exp: &Experiment,
    scheme: Scheme,
    runs: &[RunResult],
    cmp: &[Comparison],
) -> String {
    let metric_name =
        if scheme.has_chunks() { "entity F1" } else { "token accuracy" };
    let base = exp.baseline();
    let mut s = String::new();
    let _ = writeln!(s, "# Experiment summary\n");
    let failed = runs.iter().filter(|r| r.error.is_some()).count();
    let _ = writeln!(
        s,
        "{} runs ({} failed); score: test {metric_name} (%), mean ± sd over seeds {:?}; \
         baseline: {}.\n",
        runs.len(),
        failed,
        exp.training.seeds,
        exp.features[base].name
    );
    let _ = writeln!(
        s,
        "Significance: paired approximate randomization test on the test sentences \
         (Noreen 1989; Riezler and Maxwell 2005), {} rounds, two-sided, p = (r + 1)/(R + 1); \
         p is the largest over seeds; * marks significance at α = {} after Holm's correction \
         over the feature sets compared at each size.\n",
        exp.training.rounds, exp.training.alpha
    );
    let _ = writeln!(s, "| features | train sentences | score | gain | p |");
    let _ = writeln!(s, "|---|---:|---:|---:|---:|");
    for c in cmp {
        let p = c.p.map_or("—".to_string(), |p| {
            format!("{p:.4}{}", if c.significant { " *" } else { "" })
        });
        let gain = if c.features == base || c.gain.is_nan() {
            "—".to_string()
        } else {
            format!("{:+.2}", 100.0 * c.gain)
        };
        let _ = writeln!(
            s,
            "| {} | {} | {:.2} ± {:.2} | {} | {} |",
            exp.features[c.features].name,
            c.size,
            100.0 * c.mean,
            100.0 * c.sd,
            gain,
            p
        );
    }
    let _ = writeln!(s, "\n## Label saving\n");
    let _ = writeln!(
        s,
        "Baseline sentences needed to reach each feature set's mean score, read off the \
         baseline's mean learning curve made monotone (running maximum) and interpolated \
         linearly in log size; the range is over the per-seed curves (\"—\" where a seed's \
         baseline never gets there).\n"
    );
    let _ = writeln!(s, "| features | train sentences n | baseline needs n_b | n_b / n | per-seed range |");
    let _ = writeln!(s, "|---|---:|---:|---:|---:|");
    for c in cmp.iter().filter(|c| c.features != base) {
        let (needed, ratio) = match c.saving {
            Saving::Sentences(x) => {
                (format!("{x:.0}"), format!("{:.2}", x / c.size as f64))
            }
            Saving::BeyondLargest { largest } => {
                (format!("> {largest}"), "—".into())
            }
        };
        let f = |x: Option<f64>| {
            x.map_or("—".to_string(), |v| format!("{v:.0}"))
        };
        let _ = writeln!(
            s,
            "| {} | {} | {} | {} | {} – {} |",
            exp.features[c.features].name,
            c.size,
            needed,
            ratio,
            f(c.saving_range.0),
            f(c.saving_range.1)
        );
    }
    if failed > 0 {
        let _ = writeln!(s, "\n## Failed runs\n");
        for r in runs.iter().filter(|r| r.error.is_some()) {
            let _ = writeln!(
                s,
                "- {}, {} sentences, seed {}: {}",
                exp.features[r.features].name,
                r.train_sentences,
                r.seed,
                r.error.as_deref().unwrap_or("")
            );
        }
    }
    s
}

/// Draws `learning-curve.svg` and `prefixes.svg` into `dir`.
pub fn draw(
    exp: &Experiment,
    scheme: Scheme,
    cmp: &[Comparison],
    dir: &Path,
) -> Result<()> {
    let metric_name = if scheme.has_chunks() {
        "entity F1 (%)"
    } else {
        "token accuracy (%)"
    };
    let series: Vec<Series> = (0..exp.features.len())
        .map(|f| Series {
            name: exp.features[f].name.clone(),
            points: cmp
                .iter()
                .filter(|c| c.features == f)
                .map(|c| Point { x: c.size as f64, mean: c.mean, sd: c.sd })
                .collect(),
        })
        .collect();
    plots::learning_curve(
        &series,
        metric_name,
        "Test score against training size",
        &dir.join("learning-curve.svg"),
    )?;
    let largest = cmp.iter().map(|c| c.size).max().unwrap_or(0);
    let bars: Vec<(String, f64, f64)> = cmp
        .iter()
        .filter(|c| c.size == largest)
        .map(|c| (exp.features[c.features].name.clone(), c.mean, c.sd))
        .collect();
    plots::bars(
        &bars,
        metric_name,
        &format!("Test score per feature set, {largest} training sentences"),
        &dir.join("prefixes.svg"),
    )?;
    Ok(())
}
