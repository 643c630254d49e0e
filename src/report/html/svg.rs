//! Small helpers for writing SVG and HTML text by hand: escaping, fixed number formatting,
//! linear scales and tick positions. Everything here is deterministic: the same numbers give
//! the same characters.

use std::fmt::Write;

/// Escapes text for an HTML or XML text node or a quoted attribute value. Control characters
/// that XML 1.0 forbids become U+FFFD, so the page stays well-formed whatever the ids hold.
pub fn esc(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            '\t' | '\n' | '\r' => out.push(c),
            c if (c as u32) < 0x20 || c == '\u{7f}' || c == '\u{fffe}' || c == '\u{ffff}' => {
                out.push('\u{fffd}')
            }
            c => out.push(c),
        }
    }
    out
}

/// A coordinate for SVG: one decimal, trailing `.0` dropped, never `-0`.
pub fn n(value: f64) -> String {
    let value = if value.is_finite() { value } else { 0.0 };
    let mut text = format!("{value:.1}");
    if text.ends_with(".0") {
        text.truncate(text.len() - 2);
    }
    if text == "-0" {
        text = "0".to_string();
    }
    text
}

/// A value shown to people: `decimals` fixed decimals, no negative zero.
pub fn value(v: f64, decimals: usize) -> String {
    super::super::fixed(v, decimals)
}

/// A value with few significant digits for tooltips and tables: up to 4 decimals for small
/// numbers, fewer for large ones, trailing zeros kept (fixed widths line up).
pub fn short(v: f64) -> String {
    let magnitude = v.abs();
    let decimals = if magnitude >= 1000.0 {
        1
    } else if magnitude >= 10.0 {
        2
    } else {
        3
    };
    value(v, decimals)
}

/// Maps a data interval onto a pixel interval linearly.
#[derive(Clone, Copy, Debug)]
pub struct Scale {
    d0: f64,
    d1: f64,
    p0: f64,
    p1: f64,
}

impl Scale {
    /// Data `d0..d1` onto pixels `p0..p1` (either may be decreasing).
    pub fn new(d0: f64, d1: f64, p0: f64, p1: f64) -> Self {
        let d1 = if d1 == d0 { d0 + 1.0 } else { d1 };
        Scale { d0, d1, p0, p1 }
    }

    /// The pixel position of a data value.
    pub fn at(&self, v: f64) -> f64 {
        self.p0 + (v - self.d0) / (self.d1 - self.d0) * (self.p1 - self.p0)
    }
}

/// The smallest "nice" tick spacing (1, 2 or 5 times a power of ten) that divides `span` into
/// at most `target` intervals.
pub fn tick_step(span: f64, target: usize) -> f64 {
    let span = if span > 0.0 && span.is_finite() {
        span
    } else {
        1.0
    };
    let raw = span / target.max(1) as f64;
    let power = 10f64.powf(raw.log10().floor());
    let fraction = raw / power;
    let nice = if fraction <= 1.0 {
        1.0
    } else if fraction <= 2.0 {
        2.0
    } else if fraction <= 5.0 {
        5.0
    } else {
        10.0
    };
    nice * power
}

/// Tick values that are multiples of `step` within `lo..=hi`.
pub fn ticks(lo: f64, hi: f64, step: f64) -> Vec<f64> {
    let mut out = Vec::new();
    let first = (lo / step - 1e-9).ceil() as i64;
    let last = (hi / step + 1e-9).floor() as i64;
    for k in first..=last {
        out.push(k as f64 * step);
        if out.len() > 200 {
            break;
        }
    }
    out
}

/// Decimals needed to print multiples of `step` exactly enough.
pub fn tick_decimals(step: f64) -> usize {
    if step >= 1.0 {
        0
    } else {
        (-step.log10().floor()).clamp(0.0, 9.0) as usize
    }
}

/// Integer tick spacing for step axes (at least 1).
pub fn step_tick(span: f64, target: usize) -> i64 {
    (tick_step(span, target).round() as i64).max(1)
}

/// A text element; `anchor` is `start`, `middle` or `end`; `class` may be empty.
pub fn text(out: &mut String, x: f64, y: f64, anchor: &str, class: &str, body: &str) {
    let class = if class.is_empty() {
        String::new()
    } else {
        format!(" class=\"{class}\"")
    };
    let _ = write!(
        out,
        "<text x=\"{}\" y=\"{}\" text-anchor=\"{anchor}\"{class}>{}</text>",
        n(x),
        n(y),
        esc(body)
    );
}

/// Grid lines of a value axis on scale `y`, from 0 to `top` every `step`, across `left..right`,
/// each labelled at its left end.
pub fn y_grid(out: &mut String, y: &Scale, (top, step): (f64, f64), left: f64, right: f64) {
    for value in ticks(0.0, top, step) {
        let py = y.at(value);
        let _ = write!(
            out,
            "<line x1=\"{}\" x2=\"{}\" y1=\"{p}\" y2=\"{p}\" stroke=\"#e4e7eb\"/>",
            n(left),
            n(right),
            p = n(py)
        );
        text(
            out,
            left - 6.0,
            py + 4.0,
            "end",
            "tick",
            &self::value(value, tick_decimals(step)),
        );
    }
}

/// Approximate width in pixels of `chars` characters of the 11 px chart font.
pub fn text_width(chars: usize) -> f64 {
    chars as f64 * 6.4
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escaping_covers_markup_and_controls() {
        assert_eq!(esc("a<b>&\"c'"), "a&lt;b&gt;&amp;&quot;c&#39;");
        assert_eq!(esc("x\u{1}y"), "x\u{fffd}y");
    }

    #[test]
    fn coordinates_are_short_and_never_negative_zero() {
        assert_eq!(n(3.0), "3");
        assert_eq!(n(3.04), "3");
        assert_eq!(n(3.06), "3.1");
        assert_eq!(n(-0.01), "0");
        assert_eq!(n(f64::NAN), "0");
    }

    #[test]
    fn tick_steps_are_one_two_five() {
        assert_eq!(tick_step(300.0, 6), 50.0);
        assert_eq!(tick_step(1.0, 5), 0.2);
        // 87 / 4 = 21.75: the next nice spacing up is 50.
        assert_eq!(tick_step(87.0, 4), 50.0);
        assert_eq!(tick_step(80.0, 4), 20.0);
        assert_eq!(ticks(0.0, 100.0, 50.0), vec![0.0, 50.0, 100.0]);
        assert_eq!(tick_decimals(0.2), 1);
        assert_eq!(tick_decimals(0.05), 2);
    }
}
