//! Writing results: whole files atomically (a temporary file in the same
//! directory, then a rename, so a reader never sees a partial file and a
//! failed write leaves nothing behind), standard output, and CSV quoting.

use anyhow::{Context, Result};
use std::fs::File;
use std::io::Write;
use std::path::{Path, PathBuf};

/// Write `bytes` to `path` atomically.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<()> {
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let name = path
        .file_name()
        .with_context(|| format!("cannot write '{}': not a file name", path.display()))?;
    let tmp = dir.join(format!(
        ".{}.{}.partial",
        name.to_string_lossy(),
        std::process::id()
    ));
    let result = (|| -> std::io::Result<()> {
        let mut f = File::create(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        drop(f);
        std::fs::rename(&tmp, path)
    })();
    if let Err(e) = result {
        let _ = std::fs::remove_file(&tmp);
        return Err(e).with_context(|| format!("cannot write '{}'", path.display()));
    }
    Ok(())
}

/// Write text to `out` atomically, or to standard output when `out` is `None`.
pub fn emit(out: Option<&Path>, text: &str) -> Result<()> {
    match out {
        Some(p) => write_atomic(p, text.as_bytes()),
        None => {
            let mut stdout = std::io::stdout().lock();
            match stdout
                .write_all(text.as_bytes())
                .and_then(|()| stdout.flush())
            {
                // A reader that stopped early (`| head`) is not an error.
                Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
                other => other.context("cannot write to standard output"),
            }
        }
    }
}

/// Check early that a file can be created in `path`'s directory, so a long
/// run does not fail at its very end.
pub fn check_writable_dir(path: &Path) -> Result<()> {
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    let meta = std::fs::metadata(dir).with_context(|| {
        format!(
            "cannot write '{}': no directory '{}'",
            path.display(),
            dir.display()
        )
    })?;
    if !meta.is_dir() {
        anyhow::bail!(
            "cannot write '{}': '{}' is not a directory",
            path.display(),
            dir.display()
        );
    }
    if meta.permissions().readonly() {
        anyhow::bail!(
            "cannot write '{}': '{}' is read-only",
            path.display(),
            dir.display()
        );
    }
    Ok(())
}

/// One CSV field, quoted when needed (RFC 4180).
pub fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// One CSV line (with its newline) from fields.
pub fn csv_line<S: AsRef<str>>(fields: &[S]) -> String {
    let mut line = fields
        .iter()
        .map(|f| csv_field(f.as_ref()))
        .collect::<Vec<_>>()
        .join(",");
    line.push('\n');
    line
}

/// A float for CSV/JSON-like machine output: shortest text that round-trips.
pub fn num(v: f64) -> String {
    if v.is_finite() {
        format!("{v}")
    } else {
        String::new()
    }
}
