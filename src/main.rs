//! `overlap`: the command line.
fn main() {}
