//! Word clusters from raw text: the greedy class-bigram clustering of
//! Brown et al. (1992), "Class-based n-gram models of natural language",
//! with the frequency window.
//!
//! The main types:
//!
//! * [`Counts`] holds word and within-line bigram counts over a ranked
//!   vocabulary, read from [`Source`]s by a streaming [`Counter`];
//! * [`cluster`] turns counts into a [`Hierarchy`]: every merge, each
//!   word's flat class and each class's path;
//! * [`ClusterOutput`] writes a result as the three files of a cluster
//!   directory and reads them back.
//!
//! ```
//! use lexiclade_cluster::{cluster, ClusterParams, Counts};
//!
//! # fn main() -> Result<(), lexiclade_cluster::Error> {
//! let text = "the cat sat\nthe dog sat\na cat ran\na dog ran\n";
//! let counts = Counts::from_text(text, Default::default(), 1);
//! let tree = cluster(&counts, &ClusterParams { classes: 3 }, &mut |_| {})?;
//! let cat = counts.words.iter().position(|w| w == "cat").unwrap();
//! let dog = counts.words.iter().position(|w| w == "dog").unwrap();
//! assert_eq!(tree.class_of[cat], tree.class_of[dog]);
//! # Ok(())
//! # }
//! ```
//!
//! # Memory
//!
//! Counting keeps one entry per distinct word and per distinct bigram;
//! clustering adds two `(C + 1)²` tables of 8-byte counts and one of
//! 8-byte losses (24 MB for `C = 1000`) and the bigram lists twice.
//!
//! # Limits
//!
//! Word ids are `u32`: at most about four billion distinct words.
//! Counts are `u64`.
#![deny(missing_docs)]

pub mod algorithm;
pub mod ami;
pub mod count_file;
pub mod counts;
pub mod error;
pub mod exchange;
mod kernels;
pub mod normalize;
pub mod output;
pub mod query;
pub mod reference;
pub mod refine;
pub mod text;
pub mod tokenize;
mod window;

pub use algorithm::{
    cluster, ClusterParams, Hierarchy, Merge, Progress, Stage,
};
pub use counts::{Counter, Counts, TokenOptions};
pub use error::{Error, Result};
pub use exchange::ExchangeParams;
pub use output::{ClusterOutput, ClusterTable, Summary};
pub use refine::{cluster_refined, RefineReport};
pub use text::{expand_inputs, Source};
