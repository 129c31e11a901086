//! Pieces every SVG plot shares: text escaping and the safety caution wrapped to the plot.

use super::SAFETY_CAUTION;
use std::fmt::Write;

/// Text made safe inside SVG/XML elements: `&`, `<` and `>` escaped.
pub fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

/// Longest caution line in characters; at the plots' 9 px font it fits their width.
const CAUTION_LINE_CHARS: usize = 130;

/// The safety caution as SVG `<text>` lines at `x`, the first at `top`, 11 px apart, wrapped
/// by words at [`CAUTION_LINE_CHARS`] characters so that it fits the plot's width.
pub fn svg_caution(x: f64, top: f64) -> String {
    let mut lines: Vec<String> = vec![String::new()];
    for word in SAFETY_CAUTION.split_whitespace() {
        let start_new = lines
            .last()
            .is_some_and(|l| !l.is_empty() && l.len() + 1 + word.len() > CAUTION_LINE_CHARS);
        if start_new {
            lines.push(word.to_string());
        } else if let Some(last) = lines.last_mut() {
            if !last.is_empty() {
                last.push(' ');
            }
            last.push_str(word);
        }
    }
    let mut s = String::new();
    for (k, line) in lines.iter().enumerate() {
        let _ = writeln!(
            s,
            r#"<text x="{x}" y="{:.1}" font-size="9">{}</text>"#,
            top + 11.0 * k as f64,
            xml_escape(line)
        );
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_caution_is_whole_and_wrapped() {
        let s = svg_caution(10.0, 100.0);
        let words: Vec<&str> = SAFETY_CAUTION.split_whitespace().collect();
        let shown: String = s
            .lines()
            .map(|l| {
                let a = l.find('>').unwrap() + 1;
                let b = l.rfind("</text>").unwrap();
                l[a..b].to_string()
            })
            .collect::<Vec<_>>()
            .join(" ");
        assert_eq!(shown.split_whitespace().collect::<Vec<_>>(), words);
        assert!(s.lines().count() >= 2, "{s}");
        assert_eq!(xml_escape("a<b&c>"), "a&lt;b&amp;c&gt;");
    }
}
