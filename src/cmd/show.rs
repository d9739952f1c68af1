//! `lexiclade show`: look inside a cluster directory: an overview, the
//! neighbours of a word in the hierarchy, the words under a path prefix,
//! or a dendrogram of the top of the hierarchy.

use std::{
    io::Write,
    path::{Path, PathBuf},
};

use anyhow::{bail, Result};
use lexiclade::{atomic::AtomicFile, dendrogram};
use lexiclade_cluster::{query::shared_prefix, ClusterTable};

/// Look inside a cluster directory written by `lexiclade cluster`.
///
/// Without options, prints an overview: the sizes and AMI from
/// summary.json and the largest classes with their paths and most
/// frequent words. With --word, --prefix or --svg, prints or draws just
/// what was asked, in that order. Results go to standard output, notices
/// to standard error.
///
/// Words are close in the hierarchy when their class paths share a long
/// prefix: a shared prefix of n bits means they were joined n levels
/// below the root.
#[derive(clap::Args)]
pub struct Args {
    /// The cluster directory (clusters.tsv and summary.json are read).
    #[arg(value_name = "DIR")]
    dir: PathBuf,
    /// Print W's path, class and count, then the --count words sharing
    /// the longest path prefix with it: its class-mates first, then by
    /// shared prefix length, ties by count. Repeat for more words. A word
    /// that was not clustered is an error.
    #[arg(long = "word", value_name = "W")]
    words: Vec<String>,
    /// List the words whose path starts with P (0s and 1s; the empty
    /// string is the root) by count, at most --count of them and then how
    /// many more there are. Repeat for more prefixes.
    #[arg(long = "prefix", value_name = "P")]
    prefixes: Vec<String>,
    /// Draw the top --levels levels of the hierarchy as an SVG dendrogram
    /// into FILE (replacing it), with the most frequent words of each
    /// subtree at its leaves. `-` writes the SVG to standard output, and
    /// then --word and --prefix cannot be used. FILE may not be one of
    /// the directory's own files (clusters.tsv, merges.tsv, summary.json,
    /// timing.json).
    #[arg(long, value_name = "FILE")]
    svg: Option<PathBuf>,
    /// How many levels of the hierarchy --svg draws below the root; a
    /// class whose path is shorter ends as a leaf above that depth. At
    /// least 1.
    #[arg(long, default_value_t = 6, value_name = "N", requires = "svg")]
    levels: usize,
    /// How many of the most frequent words --svg writes on each leaf,
    /// beside the number of words under it.
    #[arg(long, default_value_t = 4, value_name = "N", requires = "svg")]
    leaf_words: usize,
    /// How many neighbours --word lists, how many words --prefix lists,
    /// and how many classes the overview lists.
    #[arg(long, default_value_t = 10, value_name = "N")]
    count: usize,
}

/// The files of a cluster directory, which --svg must not replace, even
/// one that is missing.
const DIR_FILES: [&str; 4] =
    ["clusters.tsv", "merges.tsv", "summary.json", "timing.json"];

/// How many words the overview shows for each class.
const OVERVIEW_WORDS: usize = 6;

/// Runs the command.
pub fn run(args: Args) -> Result<()> {
    if args.levels == 0 {
        bail!("--levels must be at least 1");
    }
    for p in &args.prefixes {
        if !p.bytes().all(|b| b == b'0' || b == b'1') {
            bail!("--prefix {p:?}: expected a path of 0s and 1s");
        }
    }
    let svg_to_stdout = args.svg.as_deref() == Some(Path::new("-"));
    if svg_to_stdout && !(args.words.is_empty() && args.prefixes.is_empty()) {
        bail!(
            "--svg - writes the image to standard output and cannot be \
             combined with --word or --prefix"
        );
    }
    let mut svg_file = None;
    if let Some(svg) = args.svg.as_deref().filter(|_| !svg_to_stdout) {
        refuse_dir_file(&args.dir, svg)?;
        // Created before the reading, so that the commit can tell
        // whether something appeared at FILE meanwhile.
        svg_file = Some(AtomicFile::create(svg, true)?);
    }

    let table = ClusterTable::read(&args.dir)?;
    // Every word is looked up before anything is printed, so an unknown
    // one fails the command without partial output.
    let mut words = Vec::with_capacity(args.words.len());
    if !args.words.is_empty() {
        let index = table.lookup();
        for w in &args.words {
            let Some(&i) = index.get(w.as_str()) else {
                bail!("{}: no word {w:?} in clusters.tsv", args.dir.display());
            };
            words.push(i);
        }
    }

    let mut out = lexiclade::atomic::standard_output();
    let mut sections = 0;
    let mut next_section = |out: &mut dyn Write| -> std::io::Result<()> {
        sections += 1;
        if sections > 1 {
            writeln!(out)?;
        }
        Ok(())
    };
    for &i in &words {
        next_section(&mut out)?;
        print_word(&mut out, &table, i, args.count)?;
    }
    for p in &args.prefixes {
        next_section(&mut out)?;
        print_prefix(&mut out, &table, p, args.count)?;
    }
    if args.svg.is_none() && words.is_empty() && args.prefixes.is_empty() {
        print_overview(&mut out, &table, &args.dir, args.count)?;
    }

    if let Some(svg) = &args.svg {
        if svg_to_stdout {
            let image =
                dendrogram::render(&table, args.levels, args.leaf_words)?;
            out.write_all(image.as_bytes())?;
        } else {
            let (image, drawn) = dendrogram::render_with_depth(
                &table,
                args.levels,
                args.leaf_words,
            )?;
            let mut file = svg_file.take().expect("created above");
            file.writer().write_all(image.as_bytes())?;
            file.commit()?;
            let deepest = if drawn < args.levels {
                format!(" (--levels {}: the tree is no deeper)", args.levels)
            } else {
                String::new()
            };
            eprintln!(
                "lexiclade: drew the top {drawn} levels of the hierarchy \
                 into {}{deepest}",
                svg.display()
            );
        }
    }
    out.flush()?;
    Ok(())
}

/// Refuses an output that would replace a file of the cluster directory.
fn refuse_dir_file(dir: &Path, out: &Path) -> Result<()> {
    let Ok(dir_real) = dir.canonicalize() else {
        // Reading the table will report the missing directory.
        return Ok(());
    };
    let parent = match out.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    let (Ok(parent_real), Some(name)) =
        (parent.canonicalize(), out.file_name())
    else {
        // Nothing can be written there; the write will say why.
        return Ok(());
    };
    // Through symbolic links, the file the output would replace.
    let target = out.canonicalize().unwrap_or_else(|_| parent_real.join(name));
    // Only the directory's own files: an image kept beside them, say
    // DIR/tree.svg, may be drawn again.
    let is_dir_file = target.parent() == Some(dir_real.as_path())
        && DIR_FILES.iter().any(|f| target.file_name() == Some(f.as_ref()));
    if is_dir_file {
        bail!(
            "{}: is a file of the cluster directory {}; choose another \
             output",
            out.display(),
            dir.display()
        );
    }
    Ok(())
}

/// The overview: sizes, AMI and the `count` largest classes.
fn print_overview(
    out: &mut dyn Write,
    table: &ClusterTable,
    dir: &Path,
    count: usize,
) -> std::io::Result<()> {
    let s = &table.summary;
    let mut text = Vec::new();
    if s.tokenize {
        text.push("tokenized");
    }
    if s.lowercase {
        text.push("lowercased");
    }
    if s.nfc {
        text.push("NFC");
    }
    let text =
        if text.is_empty() { "as given".to_string() } else { text.join(", ") };
    writeln!(out, "clusters in {}", dir.display())?;
    let facts = [
        (
            "words",
            format!(
                "{} clustered of {} types (min count {})",
                s.clustered_types, s.types, s.min_count
            ),
        ),
        (
            "tokens",
            format!("{} in {} sentences, {}", s.tokens, s.sentences, text),
        ),
        ("classes", s.classes.to_string()),
        ("AMI", format!("{:.4} bits", s.ami_bits)),
    ];
    write_facts(out, &facts)?;

    let classes = table.classes();
    let shown = classes.len().min(count);
    writeln!(out)?;
    if shown == classes.len() {
        writeln!(out, "all {} classes, by words:", classes.len())?;
    } else {
        writeln!(
            out,
            "the {shown} largest of {} classes, by words:",
            classes.len()
        )?;
    }
    let rows: Vec<Vec<String>> = classes[..shown]
        .iter()
        .map(|g| {
            let mut top: Vec<&str> = g
                .members
                .iter()
                .take(OVERVIEW_WORDS)
                .map(|&i| table.entries[i].word.as_str())
                .collect();
            if g.members.len() > OVERVIEW_WORDS {
                top.push("…");
            }
            vec![
                g.class.to_string(),
                g.path.to_string(),
                g.members.len().to_string(),
                top.join(" "),
            ]
        })
        .collect();
    write_table(
        out,
        &[
            ("class", Align::Right),
            ("path", Align::Left),
            ("words", Align::Right),
            ("top words", Align::Left),
        ],
        &rows,
    )
}

/// A word's place and its `count` nearest neighbours.
fn print_word(
    out: &mut dyn Write,
    table: &ClusterTable,
    word: usize,
    count: usize,
) -> std::io::Result<()> {
    let me = &table.entries[word];
    let facts = [
        ("word", me.word.clone()),
        ("path", me.path.clone()),
        ("class", me.class.to_string()),
        ("count", me.count.to_string()),
    ];
    write_facts(out, &facts)?;
    let nearest = table.nearest(word, count);
    writeln!(out)?;
    if nearest.is_empty() {
        return writeln!(out, "no other words");
    }
    writeln!(
        out,
        "the {} words sharing the longest path prefix with {:?}:",
        nearest.len(),
        me.word
    )?;
    let rows: Vec<Vec<String>> = nearest
        .iter()
        .map(|&i| {
            let e = &table.entries[i];
            vec![
                e.word.clone(),
                e.path.clone(),
                shared_prefix(&me.path, &e.path).to_string(),
                e.count.to_string(),
            ]
        })
        .collect();
    write_table(
        out,
        &[
            ("word", Align::Left),
            ("path", Align::Left),
            ("shared", Align::Right),
            ("count", Align::Right),
        ],
        &rows,
    )
}

/// The words under `prefix`, at most `count`.
fn print_prefix(
    out: &mut dyn Write,
    table: &ClusterTable,
    prefix: &str,
    count: usize,
) -> std::io::Result<()> {
    let found = table.under_prefix(prefix);
    let shown = found.len().min(count);
    let name = if prefix.is_empty() { "\"\" (the root)" } else { prefix };
    match found.len() {
        0 => return writeln!(out, "prefix {name}: no words"),
        1 => writeln!(out, "prefix {name}: 1 word")?,
        n => writeln!(out, "prefix {name}: {n} words")?,
    }
    let rows: Vec<Vec<String>> = found[..shown]
        .iter()
        .map(|&i| {
            let e = &table.entries[i];
            vec![e.word.clone(), e.path.clone(), e.count.to_string()]
        })
        .collect();
    if !rows.is_empty() {
        write_table(
            out,
            &[
                ("word", Align::Left),
                ("path", Align::Left),
                ("count", Align::Right),
            ],
            &rows,
        )?;
    }
    match found.len() - shown {
        0 => Ok(()),
        1 => writeln!(out, "and 1 more word"),
        more => writeln!(out, "and {more} more words"),
    }
}

/// Name–value lines with the values lined up.
fn write_facts(
    out: &mut dyn Write,
    facts: &[(&str, String)],
) -> std::io::Result<()> {
    let width = facts.iter().map(|(name, _)| name.len()).max().unwrap_or(0);
    for (name, value) in facts {
        writeln!(out, "{name:<width$}  {value}")?;
    }
    Ok(())
}

#[derive(Clone, Copy)]
enum Align {
    Left,
    Right,
}

/// A header and rows in columns two spaces apart, each as wide as its
/// widest cell in characters; the last column is not padded.
fn write_table(
    out: &mut dyn Write,
    columns: &[(&str, Align)],
    rows: &[Vec<String>],
) -> std::io::Result<()> {
    let mut widths: Vec<usize> =
        columns.iter().map(|(name, _)| name.chars().count()).collect();
    for row in rows {
        for (w, cell) in widths.iter_mut().zip(row) {
            *w = (*w).max(cell.chars().count());
        }
    }
    let header: Vec<&str> = columns.iter().map(|(name, _)| *name).collect();
    let lines = std::iter::once(header)
        .chain(rows.iter().map(|r| r.iter().map(String::as_str).collect()));
    for cells in lines {
        let mut line = String::new();
        for (c, cell) in cells.iter().enumerate() {
            let width = widths[c];
            let last = c + 1 == cells.len();
            if c > 0 {
                line.push_str("  ");
            }
            match columns[c].1 {
                Align::Right => line.push_str(&format!("{cell:>width$}")),
                Align::Left if last => line.push_str(cell),
                Align::Left => line.push_str(&format!("{cell:<width$}")),
            }
        }
        writeln!(out, "{line}")?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_columns_line_up() {
        let rows = vec![
            vec!["the".to_string(), "0110".to_string(), "12".to_string()],
            vec!["wonderful".to_string(), "1".to_string(), "3".to_string()],
        ];
        let mut out = Vec::new();
        write_table(
            &mut out,
            &[
                ("word", Align::Left),
                ("path", Align::Left),
                ("count", Align::Right),
            ],
            &rows,
        )
        .unwrap();
        assert_eq!(
            String::from_utf8(out).unwrap(),
            "word       path  count\n\
             the        0110     12\n\
             wonderful  1         3\n"
        );
    }
}
