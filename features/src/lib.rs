//! Token features for a sequence labeler: prefixes of each word's
//! cluster path over a window of positions (from one or several cluster
//! sets), plus the usual lexical templates (the word, its affixes, its
//! shape, capitalisation, neighbouring words), input columns such as POS
//! tags over a window and as n-grams, and conjunctions of two or three
//! of these values.
//!
//! The main types:
//!
//! * [`FeatureConfig`] says which templates are on, read from a TOML file
//!   (see `configs/` in the repository) and validated by
//!   [`FeatureConfig::check`] into a [`CheckedConfig`];
//! * [`Paths`] maps each clustered word to its path, built from a
//!   cluster directory and serialisable into a model file;
//! * [`Extractor`] turns a sentence into the feature strings of each
//!   token ([`Features`]) or, through a frozen [`FeatureIndex`], into
//!   feature ids ([`FeatureIds`]), filling buffers the caller reuses.
//!
//! The feature strings are listed in the [`extract`] module.
//!
//! ```
//! use lexiclade_features::{
//!     Extractor, FeatureConfig, FeatureIds, FeatureIndex, Features,
//! };
//!
//! # fn main() -> Result<(), lexiclade_features::Error> {
//! let config = FeatureConfig::from_toml(
//!     "[lexical]\nneighbour_offsets = [-1]\nchar_prefixes = false\n",
//! )?
//! .check()?;
//! // No clusters: the cluster templates stay silent.
//! let extractor = Extractor::new(config, None)?;
//!
//! let mut features = Features::new();
//! extractor.extract(&["Rust", "rocks"], &mut features);
//! let first: Vec<&str> = features.token(1).take(4).collect();
//! assert_eq!(first, ["bias", "w=rocks", "lw=rocks", "suf1=s"]);
//!
//! let train = [vec!["Rust", "rocks"], vec!["Rust", "rusts"]];
//! let index = FeatureIndex::from_sentences(&extractor, &train);
//! let mut ids = FeatureIds::new();
//! extractor.extract_ids(&index, &["Rust", "rules"], &[], &mut ids);
//! assert_eq!(ids.token(0).len(), features.token(0).len());
//! assert!(ids.token(1).len() < features.token(1).len());
//! # Ok(())
//! # }
//! ```
//!
//! # Memory
//!
//! [`Paths`] holds each clustered word once plus its path id, and each
//! distinct path once. [`FeatureIndex`] holds each kept feature string
//! once; counting before the minimum count is applied holds every
//! distinct feature of the training sentences, which for a rich config
//! is some tens of features per distinct word. Extraction allocates
//! nothing once the caller's buffers have grown.
//!
//! # Limits
//!
//! Feature ids are `u32`. Window offsets are limited to −5..=5
//! ([`config::MAX_OFFSET`]). Character affixes count Unicode scalar
//! values, not grapheme clusters, so a decomposed accent counts as a
//! character of its own.
#![deny(missing_docs)]

pub mod config;
pub mod error;
pub mod extract;
pub mod index;
mod memo;
pub mod paths;

pub use config::{
    CheckedConfig, ClusterFeatures, ClusterSet, ColumnFeatures, Conjunction,
    FeatureConfig, LexicalFeatures,
};
pub use error::{Error, Result};
pub use extract::{
    Extractor, FeatureIds, Features, IdCache, Scratch, TokenFeatures,
};
pub use index::{FeatureIndex, FeatureIndexBuilder};
pub use paths::Paths;
