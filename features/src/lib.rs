//! Turns tokens into features for a sequence labeler: cluster path
//! prefixes over a window of positions plus the usual lexical templates.
//!
//! This crate is a placeholder in the workspace until the feature stage
//! lands (see the feature-stage issue); it exposes nothing yet.
#![deny(missing_docs)]
