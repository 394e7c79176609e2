//! Integration tests of the `overlap` command line: every command driven
//! through the built binary, including bad inputs, exit codes and the files
//! it leaves behind. One test binary, one module per area.

mod baseline;
mod compare;
mod errors;
mod listing;
mod report;
mod run;
mod sweep;
mod timeline;
mod util;
