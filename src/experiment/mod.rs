//! Measuring what cluster features add: ablations over feature sets,
//! training-set sizes and seeds, with paired significance tests, label
//! savings, tables and plots. `lexiclade ablate` and `lexiclade demo` are
//! thin front ends to [`run::run`] and [`report`].

pub mod config;
pub mod plots;
pub mod report;
pub mod run;
pub mod savings;
pub mod stats;
