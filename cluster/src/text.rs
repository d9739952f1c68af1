//! Reading raw text: the inputs a user names (files, directories, `-` for
//! standard input, `.gz` files decompressed on the fly), split into lines
//! with a trailing `\r` and a leading byte-order mark removed, and each
//! line checked to be UTF-8.

use std::{
    fs::File,
    io::{self, BufRead, BufReader, Read},
    path::{Path, PathBuf},
};

use flate2::read::MultiGzDecoder;

use crate::error::{Error, Result};

/// Where a stream of text comes from.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Source {
    /// Standard input, named `-` on the command line.
    Stdin,
    /// A regular file; read through a gzip decoder when its name ends in
    /// `.gz`.
    File(PathBuf),
}

impl Source {
    /// The name used in messages: the path, or `-` for standard input.
    pub fn name(&self) -> &Path {
        match self {
            Source::Stdin => Path::new("-"),
            Source::File(path) => path,
        }
    }

    /// Opens the source for buffered reading.
    pub fn open(&self) -> Result<Box<dyn BufRead + Send>> {
        match self {
            Source::Stdin => {
                Ok(Box::new(BufReader::with_capacity(1 << 16, io::stdin())))
            }
            Source::File(path) => {
                let file = File::open(path).map_err(|e| Error::io(path, e))?;
                let gz = path.extension().is_some_and(|ext| ext == "gz");
                let inner: Box<dyn Read + Send> = if gz {
                    Box::new(MultiGzDecoder::new(BufReader::new(file)))
                } else {
                    Box::new(file)
                };
                Ok(Box::new(BufReader::with_capacity(1 << 16, inner)))
            }
        }
    }
}

/// Expands the inputs a user names into sources: `-` is standard input,
/// a directory stands for every regular file inside it (not recursively,
/// in byte order of the names), anything else is a file.
pub fn expand_inputs(inputs: &[PathBuf]) -> Result<Vec<Source>> {
    let mut sources = Vec::new();
    for input in inputs {
        if input.as_os_str() == "-" {
            sources.push(Source::Stdin);
            continue;
        }
        let meta =
            std::fs::metadata(input).map_err(|e| Error::io(input, e))?;
        if meta.is_dir() {
            let mut files = Vec::new();
            let entries =
                std::fs::read_dir(input).map_err(|e| Error::io(input, e))?;
            for entry in entries {
                let entry = entry.map_err(|e| Error::io(input, e))?;
                let path = entry.path();
                let is_file = std::fs::metadata(&path)
                    .map_err(|e| Error::io(&path, e))?
                    .is_file();
                if is_file {
                    files.push(path);
                }
            }
            files.sort();
            sources.extend(files.into_iter().map(Source::File));
        } else {
            sources.push(Source::File(input.clone()));
        }
    }
    Ok(sources)
}

/// Reads lines from a byte stream, reusing one buffer: each line comes
/// without its `\n` and without a trailing `\r`, the first without a
/// UTF-8 byte-order mark, and every line is checked to be UTF-8.
pub struct LineReader<R> {
    reader: R,
    name: PathBuf,
    buf: Vec<u8>,
    line: u64,
    bytes: u64,
}

impl<R: BufRead> LineReader<R> {
    /// Wraps `reader`; `name` is used in error messages.
    pub fn new(reader: R, name: impl Into<PathBuf>) -> Self {
        LineReader {
            reader,
            name: name.into(),
            buf: Vec::new(),
            line: 0,
            bytes: 0,
        }
    }

    /// The 1-based number of the line last returned.
    pub fn line_number(&self) -> u64 {
        self.line
    }

    /// The bytes consumed so far (after decompression).
    pub fn bytes_read(&self) -> u64 {
        self.bytes
    }

    /// The next line, or `None` at the end of the stream.
    pub fn next_line(&mut self) -> Result<Option<&str>> {
        self.buf.clear();
        let n = self
            .reader
            .read_until(b'\n', &mut self.buf)
            .map_err(|e| Error::io(&self.name, e))?;
        if n == 0 {
            return Ok(None);
        }
        self.bytes += n as u64;
        self.line += 1;
        let mut bytes = &self.buf[..];
        if let Some(rest) = bytes.strip_suffix(b"\n") {
            bytes = rest;
        }
        if let Some(rest) = bytes.strip_suffix(b"\r") {
            bytes = rest;
        }
        if self.line == 1 {
            if let Some(rest) = bytes.strip_prefix(b"\xEF\xBB\xBF") {
                bytes = rest;
            }
        }
        match std::str::from_utf8(bytes) {
            Ok(text) => Ok(Some(text)),
            Err(_) => Err(Error::InvalidUtf8 {
                path: self.name.clone(),
                line: self.line,
            }),
        }
    }
}

/// Splits a line into tokens at spaces and tabs, as the tool reads text
/// that is already tokenised.
pub fn split_tokens(line: &str) -> impl Iterator<Item = &str> {
    line.split([' ', '\t']).filter(|t| !t.is_empty())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn lines(input: &[u8]) -> Result<Vec<String>> {
        let mut reader = LineReader::new(input, "mem");
        let mut out = Vec::new();
        while let Some(line) = reader.next_line()? {
            out.push(line.to_string());
        }
        Ok(out)
    }

    #[test]
    fn strips_bom_crlf_and_handles_missing_final_newline() {
        let got = lines(b"\xEF\xBB\xBFa b\r\nc\r\n\nd").unwrap();
        assert_eq!(got, vec!["a b", "c", "", "d"]);
    }

    #[test]
    fn bom_only_counts_at_the_start() {
        let got = lines(b"a\n\xEF\xBB\xBFb\n").unwrap();
        assert_eq!(got, vec!["a".to_string(), "\u{feff}b".to_string()]);
    }

    #[test]
    fn invalid_utf8_names_the_line() {
        let err = lines(b"ok\nstill ok\nbad \xFF here\n").unwrap_err();
        assert_eq!(err.to_string(), "mem:3: invalid UTF-8");
    }

    #[test]
    fn splits_on_spaces_and_tabs_only() {
        let got: Vec<_> = split_tokens(" a\t\tb  c\u{a0}d ").collect();
        assert_eq!(got, vec!["a", "b", "c\u{a0}d"]);
    }

    #[test]
    fn directories_expand_to_sorted_regular_files() {
        let dir = tempfile::tempdir().unwrap();
        for name in ["b.txt", "a.txt", "c.gz"] {
            std::fs::write(dir.path().join(name), "x").unwrap();
        }
        std::fs::create_dir(dir.path().join("sub")).unwrap();
        let got = expand_inputs(&[dir.path().to_path_buf()]).unwrap();
        let names: Vec<_> = got
            .iter()
            .map(|s| s.name().file_name().unwrap().to_owned())
            .collect();
        assert_eq!(names, vec!["a.txt", "b.txt", "c.gz"]);
    }
}

#[cfg(test)]
mod properties {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        /// Any bytes: lines come back, or an invalid-UTF-8 error names a
        /// line; never a panic. Valid text reads back unchanged, line by
        /// line, but for a BOM and the `\r` before each `\n`.
        #[test]
        fn any_bytes_read_or_fail_cleanly(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
            let mut reader = LineReader::new(&bytes[..], "p");
            let mut lines = Vec::new();
            let result = loop {
                match reader.next_line() {
                    Ok(Some(line)) => lines.push(line.to_string()),
                    Ok(None) => break Ok(()),
                    Err(e) => break Err(e),
                }
            };
            match result {
                Ok(()) => {
                    let text = String::from_utf8(bytes.clone()).unwrap();
                    let text = text.strip_prefix('\u{feff}').unwrap_or(&text);
                    let want: Vec<String> = text
                        .split_inclusive('\n')
                        .map(|l| {
                            let l = l.strip_suffix('\n').unwrap_or(l);
                            l.strip_suffix('\r').unwrap_or(l).to_string()
                        })
                        .collect();
                    prop_assert_eq!(lines, want);
                }
                Err(Error::InvalidUtf8 { line, .. }) => {
                    prop_assert!(line >= 1);
                    prop_assert!(String::from_utf8(bytes).is_err());
                }
                Err(other) => prop_assert!(false, "unexpected error {}", other),
            }
        }
    }
}
