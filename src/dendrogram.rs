//! The top of a cluster hierarchy drawn as an SVG dendrogram.
//!
//! The tree is the one the class paths imply: every path prefix is a
//! node, `0` its left and `1` its right child. Only the top `levels`
//! levels are drawn. A node at depth `levels`, or a class path that ends
//! above it, becomes a leaf, labelled with its prefix, the most frequent
//! words under it and how many words there are in all. The root is on
//! the left and the leaves are on the right, one row each in path order
//! (`0` before `1`), joined by elbow connectors; the image grows one row
//! taller per leaf.
//!
//! The SVG is made by `plotters` without its font support: text goes
//! into the file as text and the viewer lays it out, so the image width
//! is only an estimate from the number of characters in the longest
//! label. The output depends on nothing but the table and the two
//! settings.

use std::{collections::BTreeMap, path::Path};

use anyhow::{anyhow, bail, Context, Result};
use lexiclade_cluster::ClusterTable;
use plotters::{
    prelude::*,
    style::text_anchor::{HPos, Pos, VPos},
};

/// Font size of the leaf labels, in plotters units (the SVG gets
/// `font-size` this over 1.24, about 13.7 px).
const FONT: f64 = 17.0;
/// Font size of the title line.
const TITLE_FONT: f64 = 20.0;
/// Pixels per leaf row.
const ROW: i32 = 22;
/// Pixels per level of the tree.
const STEP: i32 = 36;
/// Margins, in pixels.
const LEFT: i32 = 20;
const TOP: i32 = 48;
const BOTTOM: i32 = 16;
const RIGHT: i32 = 20;
/// Gap between the end of the tree and the leaf labels.
const GAP: i32 = 8;
/// Longest word shown in a label, in characters; longer ones are cut.
const MAX_WORD: usize = 24;
/// Estimated advance of one character, as a fraction of the SVG font
/// size: a little wider than a typical sans-serif so labels fit.
const CHAR_WIDTH: f64 = 0.62;

/// Draws the top `levels` levels of `table`'s hierarchy, with up to
/// `words_per_leaf` words on each leaf, and writes the SVG to `out`;
/// returns the number of levels drawn, which is less than `levels` when
/// the tree is shallower.
///
/// The file goes through [`AtomicFile`](crate::atomic::AtomicFile),
/// replacing an `out` that existed at the start: a failure leaves any
/// previous `out` as it was and no partial file behind.
pub fn draw(
    table: &ClusterTable,
    levels: usize,
    words_per_leaf: usize,
    out: &Path,
) -> Result<usize> {
    let (svg, depth) = render_with_depth(table, levels, words_per_leaf)?;
    let mut file = crate::atomic::AtomicFile::create(out, true)?;
    file.writer().write_all(svg.as_bytes())?;
    file.commit()?;
    Ok(depth)
}

/// The SVG document [`draw`] writes, as a string.
pub fn render(
    table: &ClusterTable,
    levels: usize,
    words_per_leaf: usize,
) -> Result<String> {
    Ok(render_with_depth(table, levels, words_per_leaf)?.0)
}

/// The SVG document [`draw`] writes and the number of levels drawn.
pub fn render_with_depth(
    table: &ClusterTable,
    levels: usize,
    words_per_leaf: usize,
) -> Result<(String, usize)> {
    let leaves = leaves(table, levels, words_per_leaf)?;
    let layout = Layout::new(&leaves);
    let title = format!(
        "{} words in {} classes: the top {} levels of the hierarchy, \
         {} leaves",
        table.entries.len(),
        table.classes().len(),
        layout.depth,
        leaves.len()
    );

    let label_x = x_at(layout.depth) + GAP;
    let widest = layout.labels.iter().map(|(text, _)| text.chars().count());
    let widest = widest.max().unwrap_or(0);
    let width = (label_x + text_width(widest, FONT) + RIGHT)
        .max(LEFT + text_width(title.chars().count(), TITLE_FONT) + RIGHT);
    let rows = i32::try_from(leaves.len()).ok().filter(|&n| n < 1 << 24);
    let rows = rows.context("too many leaves to draw")?;
    let height = TOP + rows * ROW + BOTTOM;

    let mut svg = String::new();
    {
        let size = (width as u32, height as u32);
        let area = SVGBackend::with_string(&mut svg, size).into_drawing_area();
        let fail = |e| anyhow!("cannot draw the dendrogram: {e}");
        area.fill(&WHITE).map_err(fail)?;
        let line = ShapeStyle {
            color: BLACK.to_rgba(),
            filled: false,
            stroke_width: 1,
        };
        let extension = ShapeStyle {
            color: RGBColor(170, 170, 170).to_rgba(),
            filled: false,
            stroke_width: 1,
        };
        for (points, is_extension) in &layout.lines {
            let style = if *is_extension { extension } else { line };
            area.draw(&PathElement::new(points.clone(), style))
                .map_err(fail)?;
        }
        let title_style = ("sans-serif", TITLE_FONT)
            .into_font()
            .style(FontStyle::Bold)
            .into_text_style(&area)
            .pos(Pos::new(HPos::Left, VPos::Top));
        area.draw(&Text::new(title.as_str(), (LEFT, 12), title_style))
            .map_err(fail)?;
        let label_style = ("sans-serif", FONT)
            .into_font()
            .into_text_style(&area)
            .pos(Pos::new(HPos::Left, VPos::Center));
        for (text, y) in &layout.labels {
            let label = Text::new(text.as_str(), (label_x, *y), &label_style);
            area.draw(&label).map_err(fail)?;
        }
        area.present().map_err(fail)?;
    }
    Ok((svg, layout.depth))
}

/// One leaf of the drawn tree.
struct Leaf {
    /// Its path prefix.
    prefix: String,
    /// The words under it.
    words: usize,
    /// The most frequent of them, most frequent first.
    top: Vec<String>,
}

/// The leaves of the top `levels` levels in path order, from one pass
/// over the table.
fn leaves(
    table: &ClusterTable,
    levels: usize,
    words_per_leaf: usize,
) -> Result<Vec<Leaf>> {
    if table.entries.is_empty() {
        bail!("no words to draw");
    }
    // A BTreeMap orders prefixes as the tree does: a node before its
    // descendants, `0` before `1`.
    let mut by_prefix: BTreeMap<&str, Vec<(u64, usize)>> = BTreeMap::new();
    for (row, e) in table.entries.iter().enumerate() {
        if !e.path.bytes().all(|b| b == b'0' || b == b'1') {
            bail!("the path {:?} of {:?} is not 0s and 1s", e.path, e.word);
        }
        let prefix = &e.path[..e.path.len().min(levels)];
        by_prefix.entry(prefix).or_default().push((e.count, row));
    }
    // In this order a prefix of another prefix comes right before it, or
    // before a run of keys that all start with it.
    let keys: Vec<&str> = by_prefix.keys().copied().collect();
    for pair in keys.windows(2) {
        if pair[1].starts_with(pair[0]) {
            bail!(
                "class paths are not prefix-free: {:?} is a prefix of {:?}",
                pair[0],
                pair[1]
            );
        }
    }
    Ok(by_prefix
        .into_iter()
        .map(|(prefix, mut members)| {
            // By count, then by row: the table's own order.
            members
                .sort_by_key(|&(count, row)| (std::cmp::Reverse(count), row));
            let top = members
                .iter()
                .take(words_per_leaf)
                .map(|&(_, row)| shorten(&table.entries[row].word))
                .collect();
            Leaf { prefix: prefix.to_string(), words: members.len(), top }
        })
        .collect())
}

/// Where everything goes, in pixels.
struct Layout {
    /// The depth of the deepest leaf.
    depth: usize,
    /// Polylines, and whether each is a leaf's grey extension to the
    /// label column rather than a branch.
    lines: Vec<(Vec<(i32, i32)>, bool)>,
    /// Leaf labels and the height of their row's middle.
    labels: Vec<(String, i32)>,
}

impl Layout {
    fn new(leaves: &[Leaf]) -> Layout {
        let depth = leaves.iter().map(|l| l.prefix.len()).max().unwrap_or(0);
        let mut layout =
            Layout { depth, lines: Vec::new(), labels: Vec::new() };
        layout.place(leaves, 0, 0);
        layout
    }

    /// Lays out the subtree at depth `depth` whose leaves are `leaves`,
    /// the first of them in row `first_row`; returns the height of its
    /// root. `leaves` is never empty and every prefix in it has the same
    /// first `depth` bits.
    fn place(
        &mut self,
        leaves: &[Leaf],
        depth: usize,
        first_row: usize,
    ) -> i32 {
        let x = x_at(depth);
        if let [leaf] = leaves {
            if leaf.prefix.len() == depth {
                let y = row_middle(first_row);
                if depth < self.depth {
                    self.lines
                        .push((vec![(x, y), (x_at(self.depth), y)], true));
                }
                self.labels.push((label(leaf), y));
                return y;
            }
        }
        // Prefix-free keys in path order: the left child's leaves are a
        // run at the front. A node with one child (a hand-made table can
        // have one) is drawn as a straight line.
        let split =
            leaves.partition_point(|l| l.prefix.as_bytes()[depth] == b'0');
        let mut children = Vec::with_capacity(2);
        if split > 0 {
            children.push(self.place(&leaves[..split], depth + 1, first_row));
        }
        if split < leaves.len() {
            let row = first_row + split;
            children.push(self.place(&leaves[split..], depth + 1, row));
        }
        let first = children[0];
        let last = children[children.len() - 1];
        let y = first + (last - first) / 2;
        let child_x = x_at(depth + 1);
        for child_y in children {
            self.lines
                .push((vec![(x, y), (x, child_y), (child_x, child_y)], false));
        }
        y
    }
}

/// The left edge of depth `depth`.
fn x_at(depth: usize) -> i32 {
    LEFT + STEP * depth as i32
}

/// The middle of leaf row `row`.
fn row_middle(row: usize) -> i32 {
    TOP + ROW * row as i32 + ROW / 2
}

/// The estimated width of `chars` characters at font size `font`.
fn text_width(chars: usize, font: f64) -> i32 {
    (chars as f64 * font / 1.24 * CHAR_WIDTH).ceil() as i32
}

/// A leaf's label: `PREFIX: w1 w2 w3 (N words)`. Words are split by
/// spaces alone, since they never hold one and may be punctuation such
/// as a comma; single spaces only, as SVG viewers collapse runs.
fn label(leaf: &Leaf) -> String {
    let prefix = if leaf.prefix.is_empty() { "root" } else { &leaf.prefix };
    let noun = if leaf.words == 1 { "word" } else { "words" };
    let count = format!("({} {noun})", leaf.words);
    if leaf.top.is_empty() {
        format!("{prefix}: {count}")
    } else {
        format!("{prefix}: {} {count}", leaf.top.join(" "))
    }
}

/// `word`, cut to [`MAX_WORD`] characters with an ellipsis.
fn shorten(word: &str) -> String {
    match word.char_indices().nth(MAX_WORD) {
        Some((end, _)) => format!("{}…", &word[..end]),
        None => word.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Four classes at depths 3, 3, 2 and 1:
    ///
    /// ```text
    /// 000  the a&b     001  this
    /// 01   cat dog bird
    /// 1    sat ran slowly
    /// ```
    fn table() -> ClusterTable {
        let rows = [
            ("the", "000", 0, 60),
            ("sat", "1", 3, 50),
            ("a&b", "000", 0, 40),
            ("cat", "01", 2, 30),
            ("this", "001", 1, 30),
            ("ran", "1", 3, 20),
            ("dog", "01", 2, 20),
            ("slowly", "1", 3, 10),
            ("bird", "01", 2, 10),
        ];
        ClusterTable::from_rows(&rows)
    }

    use crate::svg_test::texts;

    #[test]
    fn draws_one_label_per_leaf_in_path_order() {
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("tree.svg");
        draw(&table(), 2, 2, &out).unwrap();
        let svg = std::fs::read_to_string(&out).unwrap();
        assert!(svg.starts_with("<svg"), "{svg}");
        assert!(svg.trim_end().ends_with("</svg>"), "{svg}");
        assert_eq!(
            svg.matches("<text").count(),
            svg.matches("</text>").count()
        );
        assert_eq!(
            texts(&svg),
            [
                "9 words in 4 classes: the top 2 levels of the hierarchy, \
                 3 leaves",
                // 000 and 001 meet at 00; the word is escaped.
                "00: the a&amp;b (3 words)",
                "01: cat dog (3 words)",
                // A class path shorter than the levels drawn is a leaf.
                "1: sat ran (3 words)",
            ]
        );
        // Nothing but the file itself was left in the directory.
        let names: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(names, ["tree.svg"]);
    }

    #[test]
    fn deeper_levels_and_the_root_alone() {
        let t = table();
        let deep = texts(&render(&t, 6, 1).unwrap());
        assert_eq!(
            deep[1..],
            [
                "000: the (2 words)",
                "001: this (1 word)",
                "01: cat (3 words)",
                "1: sat (3 words)"
            ]
        );
        assert!(deep[0].contains("the top 3 levels"), "{}", deep[0]);
        let root = texts(&render(&t, 0, 0).unwrap());
        assert_eq!(root[1..], ["root: (9 words)"]);
    }

    #[test]
    fn image_grows_with_the_leaves() {
        let t = table();
        let height = |svg: String| -> i32 {
            let at = svg.find("height=\"").unwrap() + 8;
            svg[at..at + svg[at..].find('"').unwrap()].parse().unwrap()
        };
        let two = height(render(&t, 1, 4).unwrap());
        let four = height(render(&t, 3, 4).unwrap());
        assert_eq!(four - two, 2 * ROW);
    }

    #[test]
    fn same_table_same_bytes() {
        let dir = tempfile::tempdir().unwrap();
        let (a, b) = (dir.path().join("a.svg"), dir.path().join("b.svg"));
        // The tree is 3 levels deep: that is what was drawn.
        assert_eq!(draw(&table(), 6, 4, &a).unwrap(), 3);
        assert_eq!(draw(&table(), 6, 4, &b).unwrap(), 3);
        assert_eq!(std::fs::read(a).unwrap(), std::fs::read(b).unwrap());
    }

    #[test]
    fn refuses_paths_that_are_not_prefix_free() {
        let mut t = table();
        t.entries[4].path = "00".to_string(); // a prefix of "000"
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("tree.svg");
        let err = draw(&t, 6, 4, &out).unwrap_err().to_string();
        assert!(err.contains("\"00\" is a prefix of \"000\""), "{err}");
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
        // Cut at one level the clash is out of sight and drawing works.
        assert!(render(&t, 1, 4).is_ok());
    }

    #[test]
    fn long_words_are_cut() {
        assert_eq!(shorten("short"), "short");
        let long = "é".repeat(30);
        assert_eq!(shorten(&long), format!("{}…", "é".repeat(MAX_WORD)));
    }
}
