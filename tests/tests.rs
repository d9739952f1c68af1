//! Integration tests of the `lexiclade` command, by area.

mod util;

mod cluster;
mod eval;
mod featurize;
mod outside;
mod pos;
mod show;
mod tagger;
