//! The library half of the `lexiclade` command: what the commands share
//! beyond argument parsing: writing output directories atomically,
//! progress bars, seeded synthetic corpora, the embedded demo and the
//! benchmark harness. The clustering itself lives in
//! [`lexiclade_cluster`].
#![deny(missing_docs)]

pub mod atomic;
pub mod bench;
pub mod demo;
pub mod dendrogram;
pub mod experiment;
pub mod interrupt;
pub mod labeled;
pub mod progress;
pub mod synth;

/// The version of lexiclade, written into every output it makes.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");

/// The default number of worker threads: what the machine offers, at
/// most 8 (the pair updates stop scaling beyond that).
pub fn default_threads() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get()).min(8)
}

/// The most worker threads a run accepts (`--threads`, and `threads` in
/// the Python package): far beyond what the parallel loops can use, low
/// enough that a typo cannot make thousands of threads and their stacks.
pub const MAX_THREADS: usize = 1024;

/// Helpers for the unit tests of the SVG drawings.
#[cfg(test)]
pub(crate) mod svg_test {
    /// The text of every `<text>` element, in document order.
    pub fn texts(svg: &str) -> Vec<String> {
        svg.split("<text")
            .skip(1)
            .map(|rest| {
                let body = &rest[rest.find('>').unwrap() + 1..];
                body[..body.find("</text>").unwrap()].trim().to_string()
            })
            .collect()
    }
}
