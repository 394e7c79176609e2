//! Integration tests of the memory pipeline, one module per area. Every check
//! names its outside source in a comment beside it.

mod amat;
mod config;
mod littles_law;
mod modes;
mod skipping;
mod stack_distance;
mod timing;
mod util;
