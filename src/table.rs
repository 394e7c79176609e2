//! Aligned terminal tables, number formatting and bar drawing for the text
//! reports.

/// Column alignment.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Align {
    /// Pad on the right.
    Left,
    /// Pad on the left (numbers).
    Right,
}

/// A table of text cells rendered with aligned columns.
#[derive(Clone, Debug, Default)]
pub struct Table {
    header: Vec<(String, Align)>,
    rows: Vec<Vec<String>>,
    /// Rows after which a rule is drawn (index of the row before the rule).
    rules: Vec<usize>,
    indent: usize,
}

impl Table {
    /// A table with these columns.
    pub fn new(header: &[(&str, Align)]) -> Table {
        Table {
            header: header.iter().map(|(h, a)| (h.to_string(), *a)).collect(),
            ..Table::default()
        }
    }

    /// A table with owned column names.
    pub fn with_columns(header: Vec<(String, Align)>) -> Table {
        Table {
            header,
            ..Table::default()
        }
    }

    /// Indent every line by `n` spaces.
    pub fn indent(mut self, n: usize) -> Table {
        self.indent = n;
        self
    }

    /// Add a row (missing cells are blank).
    pub fn row(&mut self, cells: Vec<String>) {
        self.rows.push(cells);
    }

    /// Draw a rule under the last row added.
    pub fn rule(&mut self) {
        if let Some(n) = self.rows.len().checked_sub(1) {
            self.rules.push(n);
        }
    }

    /// Render with a header, a rule under it, and two spaces between columns.
    pub fn render(&self) -> String {
        let n = self.header.len();
        let mut widths: Vec<usize> = self.header.iter().map(|(h, _)| width(h)).collect();
        for r in &self.rows {
            for (i, c) in r.iter().enumerate().take(n) {
                widths[i] = widths[i].max(width(c));
            }
        }
        let pad = " ".repeat(self.indent);
        let total: usize = widths.iter().sum::<usize>() + 2 * n.saturating_sub(1);
        let mut out = String::new();
        let line = |cells: &mut dyn Iterator<Item = (&str, Align)>, out: &mut String| {
            let mut s = pad.clone();
            for (i, (c, a)) in cells.enumerate() {
                if i > 0 {
                    s.push_str("  ");
                }
                let fill = widths[i].saturating_sub(width(c));
                match a {
                    Align::Left => {
                        s.push_str(c);
                        s.push_str(&" ".repeat(fill));
                    }
                    Align::Right => {
                        s.push_str(&" ".repeat(fill));
                        s.push_str(c);
                    }
                }
            }
            out.push_str(s.trim_end());
            out.push('\n');
        };
        line(
            &mut self.header.iter().map(|(h, a)| (h.as_str(), *a)),
            &mut out,
        );
        let rule = format!("{pad}{}\n", "─".repeat(total));
        out.push_str(&rule);
        for (ri, r) in self.rows.iter().enumerate() {
            line(
                &mut (0..n).map(|i| (r.get(i).map_or("", |s| s.as_str()), self.header[i].1)),
                &mut out,
            );
            if self.rules.contains(&ri) {
                out.push_str(&rule);
            }
        }
        out
    }
}

/// Display width of a cell (characters; our cells hold no wide glyphs).
fn width(s: &str) -> usize {
    s.chars().count()
}

/// An integer with thousands grouped by commas: `1,234,567`.
pub fn int(v: u64) -> String {
    let s = v.to_string();
    let mut out = String::with_capacity(s.len() + s.len() / 3);
    for (i, ch) in s.chars().enumerate() {
        if i > 0 && (s.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(ch);
    }
    out
}

/// A float with `digits` decimals.
pub fn fixed(v: f64, digits: usize) -> String {
    format!("{v:.digits$}")
}

/// A share as a percentage with one decimal: `12.3%`.
pub fn percent(part: f64, whole: f64) -> String {
    if whole == 0.0 {
        "0.0%".to_string()
    } else {
        format!("{:.1}%", 100.0 * part / whole)
    }
}

/// A horizontal bar of `fraction` (0..=1) of `width` cells, drawn with block
/// characters in eighths.
pub fn bar(fraction: f64, width: usize) -> String {
    const EIGHTHS: [char; 8] = [' ', '▏', '▎', '▍', '▌', '▋', '▊', '▉'];
    let eighths = (fraction.clamp(0.0, 1.0) * width as f64 * 8.0).round() as usize;
    let mut s = "█".repeat(eighths / 8);
    if eighths % 8 > 0 {
        s.push(EIGHTHS[eighths % 8]);
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn grouping_and_bars() {
        assert_eq!(int(0), "0");
        assert_eq!(int(999), "999");
        assert_eq!(int(1000), "1,000");
        assert_eq!(int(1234567), "1,234,567");
        assert_eq!(bar(1.0, 4), "████");
        assert_eq!(bar(0.5, 4), "██");
        assert_eq!(bar(0.0, 4), "");
        assert_eq!(bar(1.0 / 32.0, 4), "▏");
    }

    #[test]
    fn columns_align() {
        let mut t = Table::new(&[("name", Align::Left), ("n", Align::Right)]);
        t.row(vec!["a".into(), "10".into()]);
        t.row(vec!["bbb".into(), "2".into()]);
        let text = t.render();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines[0], "name   n");
        assert_eq!(lines[2], "a     10");
        assert_eq!(lines[3], "bbb    2");
    }
}
