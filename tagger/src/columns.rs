//! Column files: the plain format sequence-labelling data comes in. Each
//! line is one token row of columns (a token, perhaps other annotations,
//! then labels), a blank line (or one holding only spaces and tabs) ends
//! a sentence, and a line whose first column is `-DOCSTART-` is a
//! document marker: it is skipped and ends the sentence too. CRLF line
//! ends, a leading UTF-8 byte-order mark and a missing final newline are
//! accepted; lines may be of any length.
//!
//! How a row splits into columns is decided for the whole file
//! ([`Separator`]): when every token row holds a tab, columns are split
//! on tabs only, so a token may contain spaces and an empty field is an
//! empty token (tab-separated files as they are published); otherwise
//! runs of spaces and tabs separate columns. Blank lines and document
//! markers do not count in this choice. A file that mixes rows with and
//! without a tab is split on whitespace, and [`ColumnFile::mixed`] names
//! the first row of each kind, so that callers can warn when it matters.
//!
//! Every row of a sentence must have as many columns as its first row.
//! Columns are named by [`Column`]: 1-based, negative counting from the
//! end, so a reader can ask for "the token" and "the last label" without
//! knowing how many columns lie between.
//!
//! A sentence keeps its cells in one string with their end offsets and
//! the line number of each row, so reading costs two allocations per
//! sentence rather than one per cell.

use std::{
    collections::HashSet,
    fmt,
    fs::File,
    io::{self, BufRead, BufReader},
    path::{Path, PathBuf},
    str::FromStr,
    sync::Arc,
};

use crate::error::{Error, Result};

/// The first column of a document-marker line.
pub const DOCSTART: &str = "-DOCSTART-";

/// A column of a row, as users name it: 1-based from the start, or
/// negative counting from the end (`-1` is the last column). Never 0.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Column(isize);

impl Column {
    /// The first column.
    pub const FIRST: Column = Column(1);
    /// The last column.
    pub const LAST: Column = Column(-1);

    /// The column `index` (1-based, negative from the end), or `None` for
    /// 0.
    pub const fn new(index: isize) -> Option<Column> {
        if index == 0 {
            None
        } else {
            Some(Column(index))
        }
    }

    /// The index as the user gave it.
    pub const fn get(self) -> isize {
        self.0
    }

    /// The 0-based position of this column in a row of `width` columns,
    /// or `None` when the row does not have it.
    pub fn resolve(self, width: usize) -> Option<usize> {
        let k = self.0.unsigned_abs();
        if k > width {
            None
        } else if self.0 > 0 {
            Some(k - 1)
        } else {
            Some(width - k)
        }
    }
}

impl fmt::Display for Column {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.0)
    }
}

impl FromStr for Column {
    type Err = Error;

    fn from_str(s: &str) -> Result<Column> {
        let reason = || {
            format!(
                "{s:?}: expected a non-zero integer (1 is the first column, \
                 -1 the last)"
            )
        };
        let index: isize = s.trim().parse().map_err(|_| {
            Error::InvalidParam { name: "column", reason: reason() }
        })?;
        Column::new(index)
            .ok_or(Error::InvalidParam { name: "column", reason: reason() })
    }
}

/// Which columns hold the token and the label.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ColumnSpec {
    /// The token column. Default: the first.
    pub token: Column,
    /// The label column. Default: the last.
    pub label: Column,
}

impl Default for ColumnSpec {
    fn default() -> Self {
        ColumnSpec { token: Column::FIRST, label: Column::LAST }
    }
}

/// One sentence of a column file: its rows of cells and the line number
/// of each row.
#[derive(Clone, Debug)]
pub struct Sentence {
    path: Arc<Path>,
    /// Every cell, row after row, concatenated.
    text: String,
    /// The end offset in `text` of each cell; cell `k` starts where cell
    /// `k - 1` ends.
    ends: Vec<usize>,
    width: usize,
    lines: Vec<u64>,
}

impl Sentence {
    /// The number of rows (tokens); at least 1.
    pub fn len(&self) -> usize {
        self.lines.len()
    }

    /// Always false: a sentence has at least one row.
    pub fn is_empty(&self) -> bool {
        self.lines.is_empty()
    }

    /// The number of columns of every row.
    pub fn width(&self) -> usize {
        self.width
    }

    /// The 1-based line number of each row in the file.
    pub fn lines(&self) -> &[u64] {
        &self.lines
    }

    /// The file the sentence was read from (`-` for standard input).
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The cell at 0-based `row` and `col`.
    ///
    /// # Panics
    ///
    /// When `row >= self.len()` or `col >= self.width()`.
    pub fn cell(&self, row: usize, col: usize) -> &str {
        assert!(col < self.width, "column {col} of {}", self.width);
        let k = row * self.width + col;
        let start = if k == 0 { 0 } else { self.ends[k - 1] };
        &self.text[start..self.ends[k]]
    }

    /// The cells of each of the 0-based columns `cols`, top to bottom:
    /// the values of feature columns as the extractor takes them.
    ///
    /// # Panics
    ///
    /// When a column is `>= self.width()`.
    pub fn cells_of(&self, cols: &[usize]) -> Vec<Vec<&str>> {
        cols.iter()
            .map(|&col| {
                (0..self.len()).map(|row| self.cell(row, col)).collect()
            })
            .collect()
    }

    /// The cells of 0-based `row`, in order.
    ///
    /// # Panics
    ///
    /// When `row >= self.len()`.
    pub fn row(&self, row: usize) -> impl ExactSizeIterator<Item = &str> {
        assert!(row < self.len(), "row {row} of {}", self.len());
        (0..self.width).map(move |col| self.cell(row, col))
    }

    /// The cells of `column`, one per row; an error naming the file and
    /// the sentence's first line when its rows do not have that column.
    pub fn column(&self, column: Column) -> Result<Vec<&str>> {
        let col =
            column.resolve(self.width).ok_or_else(|| Error::NoColumn {
                path: self.path.to_path_buf(),
                line: self.lines[0],
                column: column.get(),
                width: self.width,
            })?;
        Ok((0..self.len()).map(|row| self.cell(row, col)).collect())
    }

    /// The tokens: the cells of `spec.token`.
    pub fn tokens(&self, spec: &ColumnSpec) -> Result<Vec<&str>> {
        self.column(spec.token)
    }

    /// The labels: the cells of `spec.label`; an error naming the file
    /// and line when a label is empty (possible only in a tab-separated
    /// file, e.g. from a trailing tab).
    pub fn labels(&self, spec: &ColumnSpec) -> Result<Vec<&str>> {
        let labels = self.column(spec.label)?;
        if let Some(row) = labels.iter().position(|l| l.is_empty()) {
            return Err(Error::EmptyLabel {
                path: self.path.to_path_buf(),
                line: self.lines[row],
                column: spec.label.get(),
            });
        }
        Ok(labels)
    }

    /// The tokens and the labels for training or scoring: as
    /// [`Sentence::tokens`] and [`Sentence::labels`], but refused (naming
    /// the file and the sentence's first line) when both resolve to the
    /// same column of its rows, as in a one-column file or with token and
    /// label column 2 (or 2 and -1 in rows of two columns): the labels
    /// would be the words.
    pub fn labeled(
        &self,
        spec: &ColumnSpec,
    ) -> Result<(Vec<&str>, Vec<&str>)> {
        let tokens = self.tokens(spec)?;
        if spec.token.resolve(self.width) == spec.label.resolve(self.width) {
            return Err(Error::SameColumn {
                path: self.path.to_path_buf(),
                line: self.lines[0],
                token: spec.token.get(),
                label: spec.label.get(),
                width: self.width,
            });
        }
        Ok((tokens, self.labels(spec)?))
    }
}

/// A whole column file in memory.
#[derive(Clone, Debug)]
pub struct ColumnFile {
    /// The file as the caller named it (`-` for standard input).
    pub path: PathBuf,
    /// The sentences in file order; never empty.
    pub sentences: Vec<Sentence>,
    /// How the rows were split into cells.
    pub separator: Separator,
    /// Where the file mixes rows with and without a tab, if it does.
    pub mixed: Option<MixedLines>,
}

impl ColumnFile {
    /// The warning for a file whose rows mix tabs and spaces where that
    /// changes a row (`FILE: …` naming the lines), for the caller to
    /// print; `None` where the choice of separator changed nothing.
    pub fn mixed_warning(&self) -> Option<String> {
        let mixed = self.mixed.filter(|m| m.differs.is_some())?;
        Some(format!("{}: {mixed}", self.path.display()))
    }

    /// The number of token rows over all sentences.
    pub fn tokens(&self) -> usize {
        self.sentences.iter().map(Sentence::len).sum()
    }

    /// The distinct cells of `column` over the whole file, such as the
    /// vocabulary of a training file.
    pub fn vocabulary(&self, column: Column) -> Result<HashSet<&str>> {
        let mut words = HashSet::new();
        for sentence in &self.sentences {
            words.extend(sentence.column(column)?);
        }
        Ok(words)
    }
}

/// Reads the column file at `path`; `-` reads standard input, and a name
/// ending in `.gz` is decompressed on the fly.
pub fn read_columns(path: &Path) -> Result<ColumnFile> {
    if path.as_os_str() == "-" {
        read_columns_from(io::stdin().lock(), path)
    } else {
        let file = File::open(path).map_err(|e| Error::io(path, e))?;
        if path.extension().is_some_and(|ext| ext == "gz") {
            let gz = flate2::read::MultiGzDecoder::new(BufReader::new(file));
            read_columns_from(BufReader::with_capacity(1 << 16, gz), path)
        } else {
            read_columns_from(BufReader::with_capacity(1 << 16, file), path)
        }
    }
}

/// Reads a column file from `reader`; `name` is used in messages.
///
/// The file is read once, keeping each sentence's rows as whole lines
/// (joined by `\n`); when the whole file has been seen, the separator is
/// chosen ([`Separator`]) and every sentence's lines are split into cells
/// in place (cells are the lines without their separators, so they fit
/// in the lines' buffer), so memory stays about the size of the file's
/// token rows.
pub fn read_columns_from<R: BufRead>(
    mut reader: R,
    name: &Path,
) -> Result<ColumnFile> {
    let path: Arc<Path> = Arc::from(name);
    let mut sentences = Vec::new();
    let mut current: Option<Sentence> = None;
    let mut buf = Vec::new();
    let mut line: u64 = 0;
    let (mut with_tab, mut without_tab) = (None, None);
    loop {
        buf.clear();
        let n = reader
            .read_until(b'\n', &mut buf)
            .map_err(|e| Error::io(name, e))?;
        if n == 0 {
            break;
        }
        line += 1;
        let mut bytes = &buf[..];
        if let Some(rest) = bytes.strip_suffix(b"\n") {
            bytes = rest;
        }
        if let Some(rest) = bytes.strip_suffix(b"\r") {
            bytes = rest;
        }
        if line == 1 {
            if let Some(rest) = bytes.strip_prefix(b"\xEF\xBB\xBF") {
                bytes = rest;
            }
        }
        let text = std::str::from_utf8(bytes).map_err(|_| {
            Error::InvalidUtf8 { path: name.to_path_buf(), line }
        })?;
        // Blank lines and document markers are told apart the same way
        // under either separator, so sentence boundaries are known now.
        if is_blank_or_marker(bytes) {
            sentences.extend(current.take());
            continue;
        }
        if bytes.contains(&b'\t') {
            with_tab.get_or_insert(line);
        } else {
            without_tab.get_or_insert(line);
        }
        let sentence = current.get_or_insert_with(|| Sentence {
            path: Arc::clone(&path),
            text: String::new(),
            ends: Vec::new(),
            width: 0,
            lines: Vec::new(),
        });
        if !sentence.lines.is_empty() {
            sentence.text.push('\n');
        }
        sentence.text.push_str(text);
        sentence.lines.push(line);
    }
    sentences.extend(current);
    if sentences.is_empty() {
        return Err(Error::Empty { path: name.to_path_buf() });
    }
    let (separator, mixed) = match (with_tab, without_tab) {
        (Some(_), None) => (Separator::Tab, None),
        (Some(with_tab), Some(without_tab)) => {
            let differs =
                sentences.iter().find_map(first_tab_row_that_differs);
            (
                Separator::Whitespace,
                Some(MixedLines { without_tab, with_tab, differs }),
            )
        }
        _ => (Separator::Whitespace, None),
    };
    for sentence in &mut sentences {
        split_rows(sentence, separator, mixed)?;
    }
    Ok(ColumnFile { path: name.to_path_buf(), sentences, separator, mixed })
}

/// Whether a line holds only spaces and tabs, or is a document marker
/// (its first column is [`DOCSTART`]).
fn is_blank_or_marker(bytes: &[u8]) -> bool {
    let separator = |b: &u8| *b == b' ' || *b == b'\t';
    match bytes.iter().position(|b| !separator(b)) {
        None => true,
        Some(start) => {
            let rest = &bytes[start..];
            rest.strip_prefix(DOCSTART.as_bytes())
                .is_some_and(|after| after.first().is_none_or(separator))
        }
    }
}

/// How the cells of a row are separated.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Separator {
    /// Every token row of the file holds a tab: each tab ends a cell, so
    /// a cell may hold spaces or be empty (an empty token).
    Tab,
    /// Runs of spaces and tabs separate cells; cells are never empty.
    Whitespace,
}

/// In a file whose token rows hold a tab on some lines and not on
/// others (split on whitespace), the lines that show it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct MixedLines {
    /// The first token row without a tab.
    pub without_tab: u64,
    /// The first token row with a tab.
    pub with_tab: u64,
    /// The first row with a tab whose cells would differ if split on
    /// tabs alone (a cell holding a space, or an empty cell), if any:
    /// the row the choice of separator changes.
    pub differs: Option<u64>,
}

impl fmt::Display for MixedLines {
    /// Why the file was split on whitespace, and what that changed: one
    /// clause for a warning.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "columns split on spaces and tabs because line {} has no tab \
             while line {} has one",
            self.without_tab, self.with_tab
        )?;
        if let Some(line) = self.differs {
            write!(f, "; line {line} would split differently on tabs alone")?;
        }
        Ok(())
    }
}

/// The line number of the first row of a sentence (still whole lines)
/// that holds a tab and would split into other cells on tabs alone than
/// on runs of spaces and tabs: a cell holding a space, or an empty one.
fn first_tab_row_that_differs(sentence: &Sentence) -> Option<u64> {
    sentence.text.split('\n').zip(&sentence.lines).find_map(|(row, &line)| {
        let differs = row.contains('\t')
            && (row.contains(' ')
                || row.starts_with('\t')
                || row.ends_with('\t')
                || row.contains("\t\t"));
        differs.then_some(line)
    })
}

/// Splits the whole lines a sentence holds (joined by `\n`) into cells,
/// moving each cell's bytes down over the separators before it, and
/// checks that every row has as many cells as the first.
fn split_rows(
    sentence: &mut Sentence,
    separator: Separator,
    mixed: Option<MixedLines>,
) -> Result<()> {
    let mut bytes = std::mem::take(&mut sentence.text).into_bytes();
    let ends = &mut sentence.ends;
    ends.clear();
    let is_sep = |b: u8| b == b' ' || b == b'\t';
    let (mut read, mut write) = (0, 0);
    for (row, &line) in sentence.lines.iter().enumerate() {
        let before = ends.len();
        let end = bytes[read..]
            .iter()
            .position(|&b| b == b'\n')
            .map_or(bytes.len(), |k| read + k);
        let mut at = read;
        let mut push = |from: usize, to: usize, bytes: &mut Vec<u8>| {
            bytes.copy_within(from..to, write);
            write += to - from;
            ends.push(write);
        };
        match separator {
            Separator::Tab => loop {
                match bytes[at..end].iter().position(|&b| b == b'\t') {
                    Some(k) => {
                        push(at, at + k, &mut bytes);
                        at += k + 1;
                    }
                    None => {
                        push(at, end, &mut bytes);
                        break;
                    }
                }
            },
            Separator::Whitespace => loop {
                while at < end && is_sep(bytes[at]) {
                    at += 1;
                }
                if at == end {
                    break;
                }
                let start = at;
                while at < end && !is_sep(bytes[at]) {
                    at += 1;
                }
                push(start, at, &mut bytes);
            },
        }
        read = end + 1;
        let got = ends.len() - before;
        if row == 0 {
            sentence.width = got;
        } else if got != sentence.width {
            return Err(Error::ColumnCount {
                path: sentence.path.to_path_buf(),
                line,
                first_line: sentence.lines[0],
                expected: sentence.width,
                got,
                mixed,
            });
        }
    }
    bytes.truncate(write);
    // Cells end at ASCII separators, so the bytes stay valid UTF-8; the
    // check costs little next to reading.
    sentence.text =
        String::from_utf8(bytes).map_err(|_| Error::InvalidUtf8 {
            path: sentence.path.to_path_buf(),
            line: sentence.lines[0],
        })?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(input: &[u8]) -> Result<ColumnFile> {
        read_columns_from(input, Path::new("mem"))
    }

    #[test]
    fn tokens_and_labels_must_be_two_columns() {
        let spec = |t: isize, l: isize| ColumnSpec {
            token: Column::new(t).unwrap(),
            label: Column::new(l).unwrap(),
        };
        let one = read(b"\nword\nother\n").unwrap();
        let err = one.sentences[0].labeled(&ColumnSpec::default());
        assert_eq!(
            err.unwrap_err().to_string(),
            "mem:2: a row of 1 column: training needs a label column \
             besides the token column"
        );
        let three = read(b"a x B-X\nb y O\n").unwrap();
        let s = &three.sentences[0];
        for (t, l) in [(2, 2), (2, -2), (-1, 3), (1, -3)] {
            let err = s.labeled(&spec(t, l)).unwrap_err().to_string();
            assert_eq!(
                err,
                format!(
                    "mem:1: the token column ({t}) and the label column \
                     ({l}) are the same column of a row of 3 columns: \
                     training needs a label column besides the token column"
                )
            );
        }
        let (tokens, labels) = s.labeled(&spec(1, -1)).unwrap();
        assert_eq!((tokens, labels), (vec!["a", "b"], vec!["B-X", "O"]));
        let (tokens, labels) = s.labeled(&spec(-1, 2)).unwrap();
        assert_eq!((tokens, labels), (vec!["B-X", "O"], vec!["x", "y"]));
    }

    fn rows(file: &ColumnFile) -> Vec<Vec<Vec<&str>>> {
        file.sentences
            .iter()
            .map(|s| (0..s.len()).map(|r| s.row(r).collect()).collect())
            .collect()
    }

    #[test]
    fn splits_rows_columns_and_sentences() {
        let file = read(
            b"-DOCSTART- -X- O\n\nEU  B-ORG\nrejects\tO\n \t\n\
              German B-MISC\n-DOCSTART- O\nPeter B-PER\n\n\n",
        )
        .unwrap();
        assert_eq!(
            rows(&file),
            vec![
                vec![vec!["EU", "B-ORG"], vec!["rejects", "O"]],
                vec![vec!["German", "B-MISC"]],
                vec![vec!["Peter", "B-PER"]],
            ]
        );
        let lines: Vec<&[u64]> =
            file.sentences.iter().map(|s| s.lines()).collect();
        assert_eq!(lines, [&[3, 4][..], &[6], &[8]]);
        assert_eq!(file.tokens(), 4);
        assert_eq!(file.sentences[0].width(), 2);
    }

    #[test]
    fn accepts_crlf_bom_and_no_final_newline() {
        let file = read(b"\xEF\xBB\xBFa B-X\r\nb I-X\r\n\r\nc O").unwrap();
        assert_eq!(
            rows(&file),
            vec![
                vec![vec!["a", "B-X"], vec!["b", "I-X"]],
                vec![vec!["c", "O"]],
            ]
        );
    }

    #[test]
    fn very_long_lines_are_fine() {
        let long = "x".repeat(1 << 20);
        let input = format!("{long} O\n");
        let file = read(input.as_bytes()).unwrap();
        assert_eq!(file.sentences[0].cell(0, 0).len(), 1 << 20);
    }

    #[test]
    fn invalid_utf8_names_file_and_line() {
        let err = read(b"a O\n\nb\xFF O\n").unwrap_err();
        assert_eq!(err.to_string(), "mem:3: invalid UTF-8");
    }

    #[test]
    fn a_wrong_column_count_names_the_line_and_both_counts() {
        let err = read(b"a b O\n\nc d O\ne O\n").unwrap_err();
        assert_eq!(
            err.to_string(),
            "mem:4: 2 columns, but the sentence's first row (line 3) has 3"
        );
        // Another sentence may have another width.
        assert!(read(b"a b O\n\nc O\n").is_ok());
    }

    #[test]
    fn tab_separated_files_keep_spaces_and_empty_tokens() {
        // Sentences end at blank lines that hold a tab, as in the shipped
        // WNUT-17 training file; a marker line without a tab does not
        // count.
        let file = read(
            b"-DOCSTART-\n\nke s\tO\n\tO\nMoor  Hall\tB-LOC\n\t\n\
              x\tB-PER\r\n",
        )
        .unwrap();
        assert_eq!(file.separator, Separator::Tab);
        assert_eq!(file.mixed, None);
        assert_eq!(
            rows(&file),
            vec![
                vec![
                    vec!["ke s", "O"],
                    vec!["", "O"],
                    vec!["Moor  Hall", "B-LOC"]
                ],
                vec![vec!["x", "B-PER"]],
            ]
        );
        let lines: Vec<&[u64]> =
            file.sentences.iter().map(|s| s.lines()).collect();
        assert_eq!(lines, [&[3, 4, 5][..], &[7]]);
        let spec = ColumnSpec::default();
        assert_eq!(
            file.sentences[0].tokens(&spec).unwrap(),
            ["ke s", "", "Moor  Hall"]
        );
    }

    #[test]
    fn markers_are_whole_first_columns() {
        let file =
            read(b" -DOCSTART-\tO\n-DOCSTART-x O\n\t-DOCSTART-\n").unwrap();
        assert_eq!(rows(&file), vec![vec![vec!["-DOCSTART-x", "O"]]]);
    }

    #[test]
    fn whitespace_files_split_on_runs_as_before() {
        let file = read(b"EU  B-ORG\nrejects   O\n").unwrap();
        assert_eq!(file.separator, Separator::Whitespace);
        assert_eq!(file.mixed, None);
        // Columns aligned with tabs and spaces: split on the runs, and
        // noted as mixed, since tabs alone would give other cells.
        let file = read(b"EU  B-ORG\nrejects \t O\n").unwrap();
        assert_eq!(file.separator, Separator::Whitespace);
        assert_eq!(
            file.mixed,
            Some(MixedLines { without_tab: 1, with_tab: 2, differs: Some(2) })
        );
        assert_eq!(
            rows(&file),
            vec![vec![vec!["EU", "B-ORG"], vec!["rejects", "O"]]]
        );
    }

    #[test]
    fn a_trailing_tab_is_an_empty_last_column() {
        let file = read(b"a\tO\t\nb\tO\t\n").unwrap();
        assert_eq!(
            rows(&file),
            vec![vec![vec!["a", "O", ""], vec!["b", "O", ""]]]
        );
        let err =
            file.sentences[0].labels(&ColumnSpec::default()).unwrap_err();
        assert_eq!(err.to_string(), "mem:1: the label (column -1) is empty");
        let spec = ColumnSpec { token: Column::FIRST, label: Column(2) };
        assert_eq!(file.sentences[0].labels(&spec).unwrap(), ["O", "O"]);
    }

    #[test]
    fn mixed_files_split_on_whitespace_and_name_the_lines() {
        // Same cells either way: noted, with nothing that differs.
        let file = read(b"a\tO\n\nb O\n").unwrap();
        assert_eq!(file.separator, Separator::Whitespace);
        assert_eq!(
            file.mixed,
            Some(MixedLines { without_tab: 3, with_tab: 1, differs: None })
        );
        // A token with a space, in a sentence of one row: it parses, but
        // the first row that tabs alone would split otherwise is named.
        let file = read(b"a\tO\n\nke s\tO\n\nb O\n").unwrap();
        assert_eq!(
            file.mixed,
            Some(MixedLines { without_tab: 5, with_tab: 1, differs: Some(3) })
        );
        assert_eq!(rows(&file)[1], vec![vec!["ke", "s", "O"]]);
        // Empty cells are what differs too.
        let file = read(b"a\t\tO O\nb O O\n").unwrap();
        assert_eq!(file.mixed.unwrap().differs, Some(1));
        // When the row count breaks, the error says why it split so.
        let err = read(b"ke s\tO\nb O\n").unwrap_err();
        assert_eq!(
            err.to_string(),
            "mem:2: 2 columns, but the sentence's first row (line 1) has 3 \
             (columns split on spaces and tabs because line 2 has no tab \
             while line 1 has one)"
        );
    }

    #[test]
    fn a_file_without_token_rows_is_an_error() {
        for input in [&b""[..], b"\n\n", b" \t\r\n", b"-DOCSTART- O\n\n"] {
            let err = read(input).unwrap_err();
            assert_eq!(err.to_string(), "mem: no token rows", "{input:?}");
        }
    }

    #[test]
    fn columns_resolve_from_both_ends() {
        assert_eq!(Column::FIRST.resolve(3), Some(0));
        assert_eq!(Column::LAST.resolve(3), Some(2));
        assert_eq!(Column::new(-3).unwrap().resolve(3), Some(0));
        assert_eq!(Column::new(3).unwrap().resolve(3), Some(2));
        assert_eq!(Column::new(4).unwrap().resolve(3), None);
        assert_eq!(Column::new(-4).unwrap().resolve(3), None);
        assert_eq!(Column::new(0), None);
        assert_eq!("-2".parse::<Column>().unwrap(), Column(-2));
        assert!("0".parse::<Column>().is_err());
        assert!("x".parse::<Column>().is_err());
    }

    #[test]
    fn tokens_labels_and_missing_columns() {
        let file = read(b"\nEU NNP B-ORG\nrejects VBZ O\n").unwrap();
        let s = &file.sentences[0];
        let spec = ColumnSpec::default();
        assert_eq!(s.tokens(&spec).unwrap(), ["EU", "rejects"]);
        assert_eq!(s.labels(&spec).unwrap(), ["B-ORG", "O"]);
        assert_eq!(s.column(Column(2)).unwrap(), ["NNP", "VBZ"]);
        let err = s.column(Column(-4)).unwrap_err();
        assert_eq!(
            err.to_string(),
            "mem:2: there is no column -4 in a row of 3 columns"
        );
        let vocab = file.vocabulary(Column::FIRST).unwrap();
        assert!(vocab.contains("EU") && vocab.contains("rejects"));
        assert_eq!(vocab.len(), 2);
    }

    #[test]
    fn missing_files_report_the_path_with_the_cause_as_source() {
        let err = read_columns(Path::new("no/such/file.conll")).unwrap_err();
        assert_eq!(err.to_string(), "no/such/file.conll");
        assert!(std::error::Error::source(&err).is_some());
    }
}

#[cfg(test)]
mod properties {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        /// Any bytes parse as a column file or give an error naming the
        /// file; never a panic, never an empty sentence.
        #[test]
        fn any_bytes_parse_or_fail_cleanly(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
            match read_columns_from(&bytes[..], Path::new("p")) {
                Ok(file) => {
                    prop_assert!(file.sentences.iter().all(|s| !s.is_empty()));
                    prop_assert!(file.tokens() > 0);
                }
                Err(e) => prop_assert!(e.to_string().starts_with("p")),
            }
        }

        /// Tab-separated files whose tokens hold spaces or are empty
        /// read back as written, and so does writing the cells back
        /// joined by tabs (what `tag` does).
        #[test]
        fn tab_files_round_trip(
            sentences in proptest::collection::vec(
                proptest::collection::vec(("[a-z ]{0,5}", "[A-Z]{1,3}"), 1..6), 1..6)
        ) {
            let mut text = String::new();
            for s in &sentences {
                for (w, l) in s {
                    text.push_str(&format!("{w}\t{l}\n"));
                }
                text.push_str("\t\n");
            }
            let file = read_columns_from(text.as_bytes(), Path::new("g")).unwrap();
            prop_assert_eq!(file.separator, Separator::Tab);
            prop_assert_eq!(file.sentences.len(), sentences.len());
            let mut again = String::new();
            for (got, want) in file.sentences.iter().zip(&sentences) {
                let rows: Vec<(String, String)> = (0..got.len())
                    .map(|r| (got.cell(r, 0).to_string(), got.cell(r, 1).to_string()))
                    .collect();
                prop_assert_eq!(&rows, want);
                for r in 0..got.len() {
                    again.push_str(&got.row(r).collect::<Vec<_>>().join("\t"));
                    again.push('\n');
                }
                again.push('\n');
            }
            let reread = read_columns_from(again.as_bytes(), Path::new("g")).unwrap();
            for (a, b) in reread.sentences.iter().zip(&file.sentences) {
                prop_assert_eq!(a.len(), b.len());
                for r in 0..a.len() {
                    prop_assert_eq!(a.row(r).collect::<Vec<_>>(), b.row(r).collect::<Vec<_>>());
                }
            }
        }

        /// Well-formed files of random tokens round-trip.
        #[test]
        fn generated_files_round_trip(
            sentences in proptest::collection::vec(
                proptest::collection::vec(("[a-z]{1,6}", "[A-Z]{1,3}"), 1..6), 1..6)
        ) {
            let mut text = String::new();
            for s in &sentences {
                for (w, l) in s {
                    text.push_str(&format!("{w} {l}\n"));
                }
                text.push('\n');
            }
            let file = read_columns_from(text.as_bytes(), Path::new("g")).unwrap();
            prop_assert_eq!(file.sentences.len(), sentences.len());
            for (got, want) in file.sentences.iter().zip(&sentences) {
                let tokens = got.tokens(&ColumnSpec::default()).unwrap();
                let words: Vec<&str> = want.iter().map(|(w, _)| w.as_str()).collect();
                prop_assert_eq!(tokens, words);
            }
        }
    }
}
