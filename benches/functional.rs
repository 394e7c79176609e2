//! placeholder until the bench lands
fn main() {}
