//! The benchmark harness behind `lexiclade bench`: seeded synthetic
//! Zipfian corpora generated on the fly (never stored), and real text if
//! the user has it, each clustered by a separate `lexiclade cluster`
//! process so that its peak memory is its own. Figures come from the
//! `timing.json` each run writes.

use std::{
    path::{Path, PathBuf},
    process::Command,
};

use anyhow::{bail, Context, Result};

use crate::synth::ZipfCorpus;

/// The peak resident set size of this process in bytes, where the
/// operating system reports it (`VmHWM` in `/proc/self/status` on Linux).
pub fn peak_rss_bytes() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kib: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib * 1024)
}

/// What to measure.
#[derive(Clone, Debug)]
pub struct BenchPlan {
    /// Vocabulary sizes of the synthetic corpora (default 12,500, 25,000
    /// and 50,000).
    pub types: Vec<usize>,
    /// Tokens per synthetic corpus (default 20 M).
    pub tokens: u64,
    /// Class counts (default 256, 512 and 1000).
    pub classes: Vec<usize>,
    /// Real text to cluster with `--tokenize --min-count 5`, if any.
    pub text: Option<PathBuf>,
    /// Worker threads per run.
    pub threads: usize,
    /// Exchange passes after the window phase (`cluster
    /// --exchange-passes`); 0 leaves them out.
    pub exchange_passes: u32,
}

/// One measured run.
#[derive(Clone, Debug)]
pub struct BenchRow {
    /// Which corpus.
    pub corpus: String,
    /// Words clustered.
    pub words: u64,
    /// Tokens read.
    pub tokens: u64,
    /// Classes.
    pub classes: usize,
    /// Text read per second while counting, in MB (10^6 bytes).
    pub count_mb_per_s: f64,
    /// Seconds of the merge phase.
    pub cluster_seconds: f64,
    /// Wall seconds of the whole run.
    pub total_seconds: f64,
    /// Peak resident memory of the run in bytes, where known.
    pub peak_rss: Option<u64>,
    /// What the exchange refinement did, when it ran.
    pub exchange: Option<ExchangeFigures>,
}

/// The exchange refinement's figures of one run.
#[derive(Clone, Debug)]
pub struct ExchangeFigures {
    /// AMI in bits of the window phase's classes.
    pub ami_before_bits: f64,
    /// AMI in bits after the exchange.
    pub ami_after_bits: f64,
    /// Passes run.
    pub passes: u64,
    /// Words whose class changed.
    pub words_moved: u64,
    /// Seconds in the window phase, the passes and the tree rebuild.
    pub seconds: [f64; 3],
}

/// Runs `plan` with the `lexiclade` binary `exe`, writing corpora and
/// outputs under `work`; `done` is called after each run.
pub fn run(
    plan: &BenchPlan,
    exe: &Path,
    work: &Path,
    done: &mut dyn FnMut(&BenchRow),
) -> Result<Vec<BenchRow>> {
    let mut rows = Vec::new();
    for &types in &plan.types {
        let file = work.join(format!("zipf-{types}.txt"));
        let mut out = std::io::BufWriter::new(
            std::fs::File::create(&file)
                .with_context(|| file.display().to_string())?,
        );
        ZipfCorpus::new(types, plan.tokens, 1).write_to(&mut out)?;
        drop(out);
        for &classes in &plan.classes {
            let name = format!("zipf V={types}");
            let row = measure(exe, &file, &name, classes, &[], work, plan)?;
            done(&row);
            rows.push(row);
        }
        std::fs::remove_file(&file)?;
    }
    if let Some(text) = &plan.text {
        for &classes in &plan.classes {
            let name = text
                .file_name()
                .map_or("text".into(), |n| n.to_string_lossy().into_owned());
            let flags = ["--tokenize", "--min-count", "5"];
            let row = measure(exe, text, &name, classes, &flags, work, plan)?;
            done(&row);
            rows.push(row);
        }
    }
    Ok(rows)
}

fn measure(
    exe: &Path,
    input: &Path,
    corpus: &str,
    classes: usize,
    flags: &[&str],
    work: &Path,
    plan: &BenchPlan,
) -> Result<BenchRow> {
    let out = work.join("out");
    let status = Command::new(exe)
        .arg("cluster")
        .arg(input)
        .arg("--out")
        .arg(&out)
        .args(["--classes", &classes.to_string()])
        .args(["--threads", &plan.threads.to_string()])
        .args(flags)
        .args(["--exchange-passes", &plan.exchange_passes.to_string()])
        .args(["--quiet", "--force"])
        .status()
        .context("cannot run lexiclade cluster")?;
    if !status.success() {
        bail!("lexiclade cluster failed on {}", input.display());
    }
    let read = |name: &str| -> Result<serde_json::Value> {
        let path = out.join(name);
        let text = std::fs::read_to_string(&path)
            .with_context(|| path.display().to_string())?;
        Ok(serde_json::from_str(&text)?)
    };
    let (timing, summary) = (read("timing.json")?, read("summary.json")?);
    let num =
        |v: &serde_json::Value, key: &str| v[key].as_f64().unwrap_or(0.0);
    let count_seconds = num(&timing, "count_seconds").max(1e-9);
    let ex = &summary["exchange"];
    let exchange = ex.is_object().then(|| ExchangeFigures {
        ami_before_bits: num(ex, "ami_before_bits"),
        ami_after_bits: num(&summary, "ami_bits"),
        passes: ex["passes_run"].as_u64().unwrap_or(0),
        words_moved: ex["words_moved"].as_u64().unwrap_or(0),
        seconds: [
            num(&timing, "window_seconds"),
            num(&timing, "exchange_seconds"),
            num(&timing, "rebuild_seconds"),
        ],
    });
    Ok(BenchRow {
        corpus: corpus.to_string(),
        words: summary["clustered_types"].as_u64().unwrap_or(0),
        tokens: summary["tokens"].as_u64().unwrap_or(0),
        classes: summary["classes"].as_u64().unwrap_or(0) as usize,
        count_mb_per_s: num(&timing, "bytes_read") / 1e6 / count_seconds,
        cluster_seconds: num(&timing, "cluster_seconds"),
        total_seconds: num(&timing, "total_seconds"),
        peak_rss: timing["peak_rss_bytes"].as_u64(),
        exchange,
    })
}

/// The least-squares slope of `ln y` against `ln x`: the exponent `k` of
/// a fit `y ≈ c · x^k`. `None` with fewer than two distinct `x`.
pub fn fit_exponent(points: &[(f64, f64)]) -> Option<f64> {
    let pts: Vec<(f64, f64)> = points
        .iter()
        .filter(|(x, y)| *x > 0.0 && *y > 0.0)
        .map(|(x, y)| (x.ln(), y.ln()))
        .collect();
    let n = pts.len() as f64;
    let mx = pts.iter().map(|p| p.0).sum::<f64>() / n;
    let my = pts.iter().map(|p| p.1).sum::<f64>() / n;
    let sxx: f64 = pts.iter().map(|p| (p.0 - mx).powi(2)).sum();
    let sxy: f64 = pts.iter().map(|p| (p.0 - mx) * (p.1 - my)).sum();
    (pts.len() >= 2 && sxx > 0.0).then(|| sxy / sxx)
}

/// The rows as a Markdown table, then the fitted exponents of the merge
/// time in `C` (per synthetic corpus) and in `V` (per class count).
pub fn report(rows: &[BenchRow]) -> String {
    let mut out = String::from(
        "| corpus | tokens | words V | classes C | counting MB/s | merge s | \
         total s | peak memory MiB |\n|---|---:|---:|---:|---:|---:|---:|---:|\n",
    );
    for r in rows {
        let memory = r.peak_rss.map_or("?".to_string(), |b| {
            format!("{:.0}", b as f64 / 1048576.0)
        });
        out.push_str(&format!(
            "| {} | {} | {} | {} | {:.1} | {:.2} | {:.2} | {} |\n",
            r.corpus,
            r.tokens,
            r.words,
            r.classes,
            r.count_mb_per_s,
            r.cluster_seconds,
            r.total_seconds,
            memory
        ));
    }
    let refined: Vec<&BenchRow> =
        rows.iter().filter(|r| r.exchange.is_some()).collect();
    if !refined.is_empty() {
        out.push_str(
            "\n| corpus | classes C | AMI before | AMI after | gain bits | \
             passes | words moved | window s | exchange s | rebuild s |\n\
             |---|---:|---:|---:|---:|---:|---:|---:|---:|---:|\n",
        );
        for r in refined {
            let e = r.exchange.as_ref().expect("filtered");
            out.push_str(&format!(
                "| {} | {} | {:.4} | {:.4} | {:+.4} | {} | {} | {:.2} | \
                 {:.2} | {:.2} |\n",
                r.corpus,
                r.classes,
                e.ami_before_bits,
                e.ami_after_bits,
                e.ami_after_bits - e.ami_before_bits,
                e.passes,
                e.words_moved,
                e.seconds[0],
                e.seconds[1],
                e.seconds[2]
            ));
        }
    }
    let synthetic: Vec<&BenchRow> =
        rows.iter().filter(|r| r.corpus.starts_with("zipf")).collect();
    let mut corpora: Vec<&str> =
        synthetic.iter().map(|r| r.corpus.as_str()).collect();
    corpora.dedup();
    out.push('\n');
    for corpus in corpora {
        let points: Vec<(f64, f64)> = synthetic
            .iter()
            .filter(|r| r.corpus == corpus)
            .map(|r| (r.classes as f64, r.cluster_seconds))
            .collect();
        if let Some(k) = fit_exponent(&points) {
            out.push_str(&format!("merge time ∝ C^{k:.2} on {corpus}\n"));
        }
    }
    let mut classes: Vec<usize> =
        synthetic.iter().map(|r| r.classes).collect();
    classes.sort_unstable();
    classes.dedup();
    for c in classes {
        let points: Vec<(f64, f64)> = synthetic
            .iter()
            .filter(|r| r.classes == c)
            .map(|r| (r.words as f64, r.cluster_seconds))
            .collect();
        if let Some(k) = fit_exponent(&points) {
            out.push_str(&format!("merge time ∝ V^{k:.2} at C = {c}\n"));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fits_known_exponents() {
        let square: Vec<(f64, f64)> = [256.0, 512.0, 1000.0]
            .iter()
            .map(|&c| (c, 3e-6 * c * c))
            .collect();
        assert!((fit_exponent(&square).unwrap() - 2.0).abs() < 1e-12);
        let linear = [(1.0, 5.0), (10.0, 50.0)];
        assert!((fit_exponent(&linear).unwrap() - 1.0).abs() < 1e-12);
        assert_eq!(fit_exponent(&[(3.0, 1.0)]), None);
    }

    #[test]
    fn report_has_a_row_per_run_and_the_fits() {
        let row = |v: u64, c: usize, s: f64| BenchRow {
            corpus: format!("zipf V={v}"),
            words: v,
            tokens: 1000,
            classes: c,
            count_mb_per_s: 10.0,
            cluster_seconds: s,
            total_seconds: s + 1.0,
            peak_rss: Some(1 << 20),
            exchange: (c == 20).then_some(ExchangeFigures {
                ami_before_bits: 2.0,
                ami_after_bits: 2.25,
                passes: 3,
                words_moved: 7,
                seconds: [1.0, 2.0, 0.5],
            }),
        };
        let rows = [row(100, 10, 1.0), row(100, 20, 4.0), row(200, 10, 2.0)];
        let text = report(&rows);
        let first_table = text.split("\n\n").next().unwrap();
        assert_eq!(
            first_table.lines().filter(|l| l.starts_with("| zipf")).count(),
            3
        );
        assert!(text.contains("merge time ∝ C^2.00 on zipf V=100"), "{text}");
        assert!(text.contains("merge time ∝ V^1.00 at C = 10"), "{text}");
        assert!(
            text.contains(
                "| zipf V=100 | 20 | 2.0000 | 2.2500 | +0.2500 | 3 | 7 | \
                 1.00 | 2.00 | 0.50 |"
            ),
            "{text}"
        );
    }
}
