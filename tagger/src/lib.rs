//! The structured averaged-perceptron tagger (Collins 2002) and its
//! chunk-level evaluation.
//!
//! This crate is a placeholder in the workspace until the tagger stage
//! lands (see the tagger issue); it exposes nothing yet.
#![deny(missing_docs)]
pub mod columns;
pub mod error;
pub mod eval;
pub mod model;
pub mod perceptron;
pub mod pipeline;
pub mod scheme;
pub use error::{Error, Result};
