//! Integration tests of the `lexiclade` command, by area.

mod util;

mod ablate;
mod cluster;
mod count_files;
mod eval;
mod faults;
mod featurize;
mod labels;
mod normalize;
mod outputs;
mod outside;
mod pos;
mod show;
mod tagger;
