//! Hand-written SVG charts: stacked ledger bars per configuration, line
//! plots of a sweep, activity timelines and occupancy histograms. Every
//! chart is a standalone, well-formed XML document (also embeddable in
//! XHTML), and every drawn series carries `data-*` attributes naming what it
//! shows, so tests and scripts can find it.

use crate::table::int;
use indexmap::IndexMap;
use std::fmt::Write;

/// Escape text for XML content and attribute values.
pub fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for ch in s.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

/// The colour of a ledger bucket: fixed for the known buckets (green for
/// commit, warm reds for the memory side, purples for the queues, blues for
/// latency, yellows for the front end), derived from the name otherwise, so a
/// bucket has the same colour in every picture.
pub fn bucket_colour(bucket: &str) -> String {
    let fixed = match bucket {
        "commit" => Some("#3a9a5b"),
        "lockup.l1d" => Some("#a3262a"),
        "mshr.l1d" => Some("#e0663a"),
        "lq" => Some("#7b4fa0"),
        "sq" => Some("#b48ad6"),
        "regs" => Some("#2a9d9d"),
        "rob" => Some("#5b5f66"),
        "latency.memory" => Some("#4f7cc2"),
        "latency.execute" => Some("#9dbbe8"),
        "frontend.mispredict" => Some("#d4a21f"),
        "frontend.icache" => Some("#e6c766"),
        "frontend.other" => Some("#efe2b0"),
        _ => None,
    };
    if let Some(c) = fixed {
        return c.to_string();
    }
    // Other buckets (stations named in a config): an earthy hue from the name.
    const EXTRA: [&str; 8] = [
        "#8c6d46", "#b0885a", "#6e8b3d", "#9a7b9e", "#c27c5a", "#5e8c7a", "#a69150", "#7d6a5a",
    ];
    let h = bucket.bytes().fold(0xcbf2_9ce4_8422_2325_u64, |h, b| {
        (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3)
    });
    EXTRA[(h % EXTRA.len() as u64) as usize].to_string()
}

/// Colours for the lines of a plot, in order.
const SERIES: [&str; 8] = [
    "#2f6db5", "#d1553b", "#3a9a5b", "#8a5cb8", "#c79a1a", "#2a9d9d", "#b5477a", "#5b5f66",
];

/// Colour of the `i`-th line of a plot.
pub fn series_colour(i: usize) -> &'static str {
    SERIES[i % SERIES.len()]
}

fn open(out: &mut String, width: f64, height: f64, title: &str) {
    let _ = write!(
        out,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{width:.0}\" height=\"{height:.0}\" \
         viewBox=\"0 0 {width:.0} {height:.0}\" font-family=\"Helvetica, Arial, sans-serif\" font-size=\"12\">\n\
         <title>{}</title>\n<rect width=\"100%\" height=\"100%\" fill=\"#ffffff\"/>\n",
        esc(title)
    );
}

/// A new chart: the document opening and the title in bold at the top left.
fn titled(width: f64, height: f64, title: &str) -> String {
    let mut s = String::new();
    open(&mut s, width, height, title);
    let _ = writeln!(
        s,
        "<text x=\"12\" y=\"22\" font-size=\"15\" font-weight=\"bold\">{}</text>",
        esc(title)
    );
    s
}

/// A grey line of text under the title, its baseline at `y`; `markup` is
/// written as it is (escape any text in it first).
fn note_line(s: &mut String, y: u32, markup: &str) {
    let _ = writeln!(s, "<text x=\"12\" y=\"{y}\" fill=\"#555\">{markup}</text>");
}

/// One bar of a ledger chart.
pub struct LedgerBar<'a> {
    /// The configuration's label.
    pub label: &'a str,
    /// Total cycles of the run.
    pub cycles: u64,
    /// The ledger.
    pub ledger: &'a IndexMap<String, u64>,
}

/// Stacked horizontal bars, one per configuration, segments in `order`,
/// lengths proportional to cycles (the longest run spans the plot), and a
/// legend of the buckets that appear.
pub fn ledger_bars(
    title: &str,
    subtitle: &str,
    bars: &[LedgerBar<'_>],
    order: &[String],
) -> String {
    let label_w = 10.0
        + 7.5
            * bars
                .iter()
                .map(|b| b.label.chars().count())
                .max()
                .unwrap_or(4) as f64;
    let plot_x = label_w.max(90.0);
    let plot_w = 560.0;
    let bar_h = 28.0;
    let gap = 14.0;
    let top = 62.0;
    let present: Vec<&String> = order
        .iter()
        .filter(|b| {
            bars.iter()
                .any(|bar| bar.ledger.get(*b).is_some_and(|&c| c > 0))
        })
        .collect();
    let legend_cols = 3usize;
    let legend_rows = present.len().div_ceil(legend_cols);
    let width = plot_x + plot_w + 130.0;
    let bars_bottom = top + bars.len() as f64 * (bar_h + gap);
    let height = bars_bottom + 30.0 + legend_rows as f64 * 20.0 + 10.0;
    let max = bars.iter().map(|b| b.cycles).max().unwrap_or(0).max(1) as f64;
    let mut s = titled(width, height, title);
    note_line(&mut s, 38, &esc(subtitle));
    note_line(
        &mut s,
        54,
        "bar length: cycles (the longest run spans the plot); segments: the cycle ledger",
    );
    for (i, b) in bars.iter().enumerate() {
        let y = top + i as f64 * (bar_h + gap);
        let _ = writeln!(
            s,
            "<g class=\"bar\" data-config=\"{}\" data-cycles=\"{}\">",
            esc(b.label),
            b.cycles
        );
        let _ = writeln!(
            s,
            "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\">{}</text>",
            plot_x - 8.0,
            y + bar_h / 2.0 + 4.0,
            esc(b.label)
        );
        let mut x = plot_x;
        for bucket in order {
            let c = b.ledger.get(bucket).copied().unwrap_or(0);
            if c == 0 {
                continue;
            }
            let w = plot_w * c as f64 / max;
            let _ = writeln!(
                s,
                "<rect class=\"seg\" data-bucket=\"{}\" data-cycles=\"{c}\" x=\"{x:.2}\" y=\"{y:.1}\" width=\"{w:.2}\" height=\"{bar_h}\" fill=\"{}\"><title>{}: {} {} cycles ({:.1}%)</title></rect>",
                esc(bucket),
                bucket_colour(bucket),
                esc(b.label),
                esc(bucket),
                int(c),
                100.0 * c as f64 / b.cycles.max(1) as f64
            );
            x += w;
        }
        let _ = writeln!(
            s,
            "<text x=\"{:.1}\" y=\"{:.1}\" fill=\"#333\">{} cycles</text>",
            x + 6.0,
            y + bar_h / 2.0 + 4.0,
            int(b.cycles)
        );
        s.push_str("</g>\n");
    }
    legend(&mut s, plot_x, bars_bottom + 16.0, &present, legend_cols);
    s.push_str("</svg>\n");
    s
}

fn legend(s: &mut String, x0: f64, y0: f64, buckets: &[&String], cols: usize) {
    s.push_str("<g class=\"legend\">\n");
    for (i, b) in buckets.iter().enumerate() {
        let x = x0 + (i % cols) as f64 * 190.0;
        let y = y0 + (i / cols) as f64 * 20.0;
        let _ = writeln!(
            s,
            "<g class=\"legend-entry\" data-bucket=\"{}\"><rect x=\"{x:.1}\" y=\"{y:.1}\" width=\"12\" height=\"12\" fill=\"{}\"/><text x=\"{:.1}\" y=\"{:.1}\">{}</text></g>",
            esc(b),
            bucket_colour(b),
            x + 17.0,
            y + 10.5,
            esc(b)
        );
    }
    s.push_str("</g>\n");
}

/// A "nice" upper bound and tick step for an axis from 0 to `max`.
fn nice_axis(max: f64) -> (f64, f64) {
    if max <= 0.0 || !max.is_finite() {
        return (1.0, 0.25);
    }
    let raw = max / 4.0;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    ((max / step).ceil() * step, step)
}

/// A tick value with as many decimals as the axis step needs.
fn tick_label(v: f64, step: f64) -> String {
    if step >= 1.0 && step == step.trunc() {
        return int(v.round().max(0.0) as u64);
    }
    let mut decimals = 0;
    while decimals < 6
        && ((step * 10f64.powi(decimals)).round() - step * 10f64.powi(decimals)).abs() > 1e-9
    {
        decimals += 1;
    }
    format!("{v:.prec$}", prec = decimals as usize)
}

/// One line of a plot: a label and one value per x category (`None` = no point).
pub struct Line {
    /// Legend text.
    pub label: String,
    /// Values, one per x category.
    pub values: Vec<Option<f64>>,
}

/// A line plot over categorical x values (evenly spaced, in the given order).
pub fn line_plot(
    title: &str,
    x_label: &str,
    y_label: &str,
    xs: &[String],
    lines: &[Line],
) -> String {
    let (left, top, plot_w, plot_h) = (70.0, 40.0, 520.0, 300.0);
    let legend_x = left + plot_w + 24.0;
    let width = legend_x + 200.0;
    let height = top + plot_h + 60.0;
    let max = lines
        .iter()
        .flat_map(|l| l.values.iter().flatten())
        .fold(0.0f64, |a, &b| a.max(b));
    let (ymax, ystep) = nice_axis(max);
    let n = xs.len().max(1);
    let xpos = |i: usize| {
        if n == 1 {
            left + plot_w / 2.0
        } else {
            left + 20.0 + (plot_w - 40.0) * i as f64 / (n - 1) as f64
        }
    };
    let ypos = |v: f64| top + plot_h - plot_h * v / ymax;
    let mut s = titled(width, height, title);
    // Axes and grid.
    s.push_str("<g class=\"axes\" stroke=\"#999\">\n");
    let mut v = 0.0;
    while v <= ymax + ystep / 2.0 {
        let y = ypos(v);
        let _ = writeln!(
            s,
            "<line x1=\"{left}\" y1=\"{y:.1}\" x2=\"{:.1}\" y2=\"{y:.1}\" stroke=\"#e4e4e4\"/><text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\" stroke=\"none\" fill=\"#333\">{}</text>",
            left + plot_w,
            left - 6.0,
            y + 4.0,
            tick_label(v, ystep)
        );
        v += ystep;
    }
    let _ = writeln!(
        s,
        "<line x1=\"{left}\" y1=\"{top}\" x2=\"{left}\" y2=\"{:.1}\"/><line x1=\"{left}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\"/>",
        top + plot_h,
        top + plot_h,
        left + plot_w,
        top + plot_h
    );
    for (i, x) in xs.iter().enumerate() {
        let _ = writeln!(
            s,
            "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\" stroke=\"none\" fill=\"#333\">{}</text>",
            xpos(i),
            top + plot_h + 16.0,
            esc(x)
        );
    }
    s.push_str("</g>\n");
    let _ = writeln!(
        s,
        "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\">{}</text>",
        left + plot_w / 2.0,
        top + plot_h + 40.0,
        esc(x_label)
    );
    let _ = writeln!(
        s,
        "<text x=\"16\" y=\"{:.1}\" text-anchor=\"middle\" transform=\"rotate(-90 16 {:.1})\">{}</text>",
        top + plot_h / 2.0,
        top + plot_h / 2.0,
        esc(y_label)
    );
    for (li, line) in lines.iter().enumerate() {
        let colour = series_colour(li);
        let _ = writeln!(
            s,
            "<g class=\"series\" data-series=\"{}\">",
            esc(&line.label)
        );
        let pts: Vec<(f64, f64, f64)> = line
            .values
            .iter()
            .enumerate()
            .filter_map(|(i, v)| v.map(|v| (xpos(i), ypos(v), v)))
            .collect();
        if pts.len() > 1 {
            let path: Vec<String> = pts
                .iter()
                .map(|(x, y, _)| format!("{x:.1},{y:.1}"))
                .collect();
            let _ = writeln!(
                s,
                "<polyline fill=\"none\" stroke=\"{colour}\" stroke-width=\"2\" points=\"{}\"/>",
                path.join(" ")
            );
        }
        for (x, y, v) in &pts {
            let _ = writeln!(
                s,
                "<circle class=\"point\" data-value=\"{v}\" cx=\"{x:.1}\" cy=\"{y:.1}\" r=\"3.5\" fill=\"{colour}\"><title>{}: {v}</title></circle>",
                esc(&line.label)
            );
        }
        let ly = top + 10.0 + li as f64 * 20.0;
        let _ = writeln!(
            s,
            "<rect x=\"{legend_x}\" y=\"{:.1}\" width=\"14\" height=\"4\" fill=\"{colour}\"/><text x=\"{:.1}\" y=\"{:.1}\">{}</text>",
            ly - 4.0,
            legend_x + 20.0,
            ly + 2.0,
            esc(&line.label)
        );
        s.push_str("</g>\n");
    }
    s.push_str("</svg>\n");
    s
}

/// One configuration's activity over the timeline window.
pub struct TimelinePanel<'a> {
    /// Configuration label.
    pub label: &'a str,
    /// Absolute cycle of the window's first cycle.
    pub from: u64,
    /// Instructions retired per cycle.
    pub retired: &'a [u32],
    /// Outstanding L1D demand misses per cycle.
    pub l1d: &'a [u32],
    /// Outstanding DRAM demand reads per cycle.
    pub dram: &'a [u32],
    /// Cycles of the window the run reached.
    pub observed: usize,
}

/// Most columns a timeline strip is drawn with.
const MAX_COLUMNS: usize = 1600;

/// `values[..observed]` in columns of `per`, each the largest of its values.
fn columns(values: &[u32], observed: usize, per: usize) -> Vec<u32> {
    values[..observed.min(values.len())]
        .chunks(per.max(1))
        .map(|c| c.iter().copied().max().unwrap_or(0))
        .collect()
}

/// For each configuration, a strip of instructions retired per cycle above a
/// strip of outstanding misses per cycle, all on one cycle axis.
pub fn timeline(
    title: &str,
    subtitle: &str,
    cycles: usize,
    panels: &[TimelinePanel<'_>],
) -> String {
    let (left, plot_w) = (110.0, 780.0);
    let (retire_h, miss_h, panel_gap) = (50.0, 70.0, 44.0);
    let panel_h = retire_h + 8.0 + miss_h;
    let top = 88.0;
    let width = left + plot_w + 30.0;
    let height = top + panels.len() as f64 * (panel_h + panel_gap) + 30.0;
    let n = cycles.max(1) as f64;
    let xw = plot_w / n;
    // Long windows are drawn in columns of `per` cycles, each showing the
    // largest value of its cycles, so the picture stays small.
    let per = cycles.div_ceil(MAX_COLUMNS).max(1);
    let col_w = xw * per as f64;
    let max_retired = panels
        .iter()
        .flat_map(|p| p.retired.iter())
        .copied()
        .max()
        .unwrap_or(0)
        .max(1);
    let max_miss = panels
        .iter()
        .flat_map(|p| p.l1d.iter().chain(p.dram.iter()))
        .copied()
        .max()
        .unwrap_or(0)
        .max(1);
    let mut s = titled(width, height, title);
    let peaks = if per > 1 {
        format!(" · each column shows the peak of {per} cycles")
    } else {
        String::new()
    };
    note_line(&mut s, 40, &format!("{}{peaks}", esc(subtitle)));
    note_line(
        &mut s,
        58,
        "upper strip: instructions retired per cycle; lower strip: outstanding demand misses, <tspan fill=\"#e0663a\" font-weight=\"bold\">L1D</tspan> (filled) and <tspan fill=\"#4f7cc2\" font-weight=\"bold\">DRAM</tspan> (line); x: cycles since each window start",
    );
    for (pi, p) in panels.iter().enumerate() {
        let y0 = top + pi as f64 * (panel_h + panel_gap);
        let _ = writeln!(
            s,
            "<g class=\"panel\" data-config=\"{}\" data-from=\"{}\">",
            esc(p.label),
            p.from
        );
        let _ = writeln!(
            s,
            "<text x=\"{left}\" y=\"{:.1}\" font-weight=\"bold\">{}</text><text x=\"{:.1}\" y=\"{:.1}\" fill=\"#555\">from cycle {}</text>",
            y0 - 7.0,
            esc(p.label),
            left + 8.0 + 7.5 * p.label.chars().count() as f64,
            y0 - 7.0,
            int(p.from)
        );
        let _ = writeln!(
            s,
            "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\" fill=\"#555\">retired</text><text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\" fill=\"#555\">0–{max_retired}/cycle</text>",
            left - 8.0,
            y0 + 20.0,
            left - 8.0,
            y0 + 36.0
        );
        let _ = writeln!(
            s,
            "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\" fill=\"#555\">outstanding</text><text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\" fill=\"#555\">misses 0–{max_miss}</text>",
            left - 8.0,
            y0 + retire_h + 8.0 + 30.0,
            left - 8.0,
            y0 + retire_h + 8.0 + 46.0
        );
        // Retired strip: one bar per cycle with commits, as a single path.
        let base = y0 + retire_h;
        let _ = writeln!(
            s,
            "<rect x=\"{left}\" y=\"{y0:.1}\" width=\"{plot_w}\" height=\"{retire_h}\" fill=\"#f6f6f6\"/>"
        );
        let mut d = String::new();
        for (i, &c) in columns(p.retired, p.observed, per).iter().enumerate() {
            if c == 0 {
                continue;
            }
            let h = retire_h * f64::from(c) / f64::from(max_retired);
            let _ = write!(
                d,
                "M{:.2},{base:.1}h{:.2}v{:.2}h{:.2}z",
                left + i as f64 * col_w,
                col_w,
                -h,
                -col_w
            );
        }
        let _ = writeln!(
            s,
            "<path class=\"strip\" data-series=\"retired\" data-total=\"{}\" d=\"{d}\" fill=\"#3a9a5b\"/>",
            p.retired.iter().map(|&v| u64::from(v)).sum::<u64>()
        );
        // Miss strip: step lines of outstanding L1D misses and DRAM reads.
        let my0 = y0 + retire_h + 8.0;
        let mbase = my0 + miss_h;
        let _ = writeln!(
            s,
            "<rect x=\"{left}\" y=\"{my0:.1}\" width=\"{plot_w}\" height=\"{miss_h}\" fill=\"#f6f6f6\"/>"
        );
        for (series, values, colour, fill) in [
            ("l1d", p.l1d, "#e0663a", "#f3c2ad"),
            ("dram", p.dram, "#4f7cc2", "none"),
        ] {
            let mut d = format!("M{left:.2},{mbase:.1}");
            for (i, &v) in columns(values, p.observed, per).iter().enumerate() {
                let y = mbase - miss_h * f64::from(v) / f64::from(max_miss);
                let _ = write!(
                    d,
                    "V{y:.2}H{:.2}",
                    (left + (i + 1) as f64 * col_w).min(left + plot_w)
                );
            }
            let _ = write!(d, "V{mbase:.1}");
            let _ = writeln!(
                s,
                "<path class=\"strip\" data-series=\"{series}\" data-peak=\"{}\" d=\"{d}\" fill=\"{fill}\" fill-opacity=\"0.8\" stroke=\"{colour}\" stroke-width=\"1.2\"/>",
                values.iter().copied().max().unwrap_or(0)
            );
        }
        s.push_str("</g>\n");
    }
    // Shared cycle axis under the last panel.
    let axis_y = top + panels.len() as f64 * (panel_h + panel_gap) - panel_gap + 18.0;
    let (_, step) = nice_axis(n);
    let mut c = 0.0;
    s.push_str("<g class=\"axis\">\n");
    while c <= n {
        let x = left + c * xw;
        let _ = writeln!(
            s,
            "<line x1=\"{x:.1}\" y1=\"{:.1}\" x2=\"{x:.1}\" y2=\"{:.1}\" stroke=\"#999\"/><text x=\"{x:.1}\" y=\"{:.1}\" text-anchor=\"middle\">{}</text>",
            axis_y - 4.0,
            axis_y + 2.0,
            axis_y + 16.0,
            tick_label(c, step)
        );
        c += step;
    }
    s.push_str("</g>\n</svg>\n");
    s
}

/// A histogram of cycles with `k` outstanding misses, `k >= 1`, as shares
/// of the cycles with at least one.
pub fn occupancy_histogram(title: &str, series: &str, hist: &[u64]) -> String {
    let busy: u64 = hist.iter().skip(1).sum();
    let ks = hist.len().saturating_sub(1).max(1);
    let (left, top, plot_w, plot_h) = (50.0, 34.0, 340.0, 140.0);
    let width = left + plot_w + 20.0;
    let height = top + plot_h + 40.0;
    let shares: Vec<f64> = hist
        .iter()
        .skip(1)
        .map(|&c| {
            if busy == 0 {
                0.0
            } else {
                c as f64 / busy as f64
            }
        })
        .collect();
    let max = shares.iter().copied().fold(0.0, f64::max);
    let (ymax, ystep) = nice_axis(if max > 0.0 { max * 100.0 } else { 1.0 });
    let bw = plot_w / ks as f64;
    let mut s = String::new();
    open(&mut s, width, height, title);
    let _ = writeln!(
        s,
        "<text x=\"8\" y=\"20\" font-size=\"13\" font-weight=\"bold\">{}</text>",
        esc(title)
    );
    let mut v = 0.0;
    while v <= ymax + ystep / 2.0 {
        let y = top + plot_h - plot_h * v / ymax;
        let _ = writeln!(
            s,
            "<line x1=\"{left}\" y1=\"{y:.1}\" x2=\"{:.1}\" y2=\"{y:.1}\" stroke=\"#e4e4e4\"/><text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\">{}%</text>",
            left + plot_w,
            left - 4.0,
            y + 4.0,
            tick_label(v, ystep)
        );
        v += ystep;
    }
    let _ = writeln!(s, "<g class=\"histogram\" data-series=\"{}\">", esc(series));
    for (i, share) in shares.iter().enumerate() {
        let h = plot_h * share * 100.0 / ymax;
        let x = left + i as f64 * bw;
        let _ = writeln!(
            s,
            "<rect class=\"bin\" data-k=\"{}\" data-cycles=\"{}\" x=\"{:.1}\" y=\"{:.1}\" width=\"{:.1}\" height=\"{h:.1}\" fill=\"#e0663a\"><title>{} outstanding: {:.1}% of busy cycles</title></rect>",
            i + 1,
            hist[i + 1],
            x + 1.0,
            top + plot_h - h,
            (bw - 2.0).max(1.0),
            i + 1,
            share * 100.0
        );
    }
    s.push_str("</g>\n");
    let label_every = ks.div_ceil(16).max(1);
    for i in (0..ks).step_by(label_every) {
        let _ = writeln!(
            s,
            "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\">{}</text>",
            left + (i as f64 + 0.5) * bw,
            top + plot_h + 14.0,
            i + 1
        );
    }
    let _ = writeln!(
        s,
        "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\" fill=\"#555\">outstanding misses; share of the {} busy cycles</text>",
        left + plot_w / 2.0,
        top + plot_h + 32.0,
        int(busy)
    );
    s.push_str("</svg>\n");
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escaping_and_axes() {
        assert_eq!(esc("a<b & \"c\""), "a&lt;b &amp; &quot;c&quot;");
        assert_eq!(nice_axis(0.93), (1.0, 0.25));
        assert_eq!(nice_axis(17.0), (20.0, 5.0));
        assert_eq!(bucket_colour("rs.fp"), bucket_colour("rs.fp"));
        assert_eq!(tick_label(0.0, 0.2), "0.0");
        assert_eq!(tick_label(0.5, 0.25), "0.50");
        assert_eq!(tick_label(1500.0, 500.0), "1,500");
    }
}
