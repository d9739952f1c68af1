//! Integration tests of the `lexiclade` command, by area.

mod util;

mod cluster;
mod outside;
mod show;
