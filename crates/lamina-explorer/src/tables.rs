//! The analysis results as tab-separated text for the clipboard: one header line and one
//! line per row, numbers in full precision (the shortest text that reads back as the same
//! number), so a paste into a spreadsheet fills one cell per value.

use lamina_core::cycle::Multiplier;
use lamina_core::rest::RestingPoint;
use lamina_scenario::Scenario;

use crate::session::stability_words;

/// Multipliers: `re`, `im`, `|m|`.
pub fn multipliers_tsv(values: &[Multiplier]) -> String {
    let mut out = String::from("re\tim\t|m|\n");
    for m in values {
        out.push_str(&format!("{}\t{}\t{}\n", m.re, m.im, m.re.hypot(m.im)));
    }
    out
}

/// Lyapunov exponents with the spread of their running estimates.
pub fn exponents_tsv(exponents: &[f64], spread: &[f64]) -> String {
    let mut out = String::from("exponent\tvalue\tspread\n");
    for (i, l) in exponents.iter().enumerate() {
        let s = spread.get(i).copied().unwrap_or(f64::NAN);
        out.push_str(&format!("λ{}\t{l}\t{s}\n", i + 1));
    }
    out
}

/// Resting points: number, stability in words, each state (its unit in the header), then the
/// real and imaginary part of each eigenvalue.
pub fn resting_points_tsv(points: &[RestingPoint], scenario: &Scenario) -> String {
    let mut header = vec!["point".to_string(), "stability".to_string()];
    for s in &scenario.states {
        header.push(match s.unit.as_deref().map(str::trim) {
            Some(unit) if !unit.is_empty() => format!("{} ({unit})", s.name),
            _ => s.name.clone(),
        });
    }
    let n_eigen = points
        .iter()
        .map(|p| p.eigenvalues.len())
        .max()
        .unwrap_or(0);
    for k in 1..=n_eigen {
        header.push(format!("eigenvalue {k} re"));
        header.push(format!("eigenvalue {k} im"));
    }
    let mut out = header.join("\t");
    out.push('\n');
    for (i, p) in points.iter().enumerate() {
        let mut row = vec![(i + 1).to_string(), stability_words(p)];
        row.extend(p.state.iter().map(|v| plain_zero(*v).to_string()));
        for e in &p.eigenvalues {
            row.push(plain_zero(e.re).to_string());
            row.push(plain_zero(e.im).to_string());
        }
        out.push_str(&row.join("\t"));
        out.push('\n');
    }
    out
}

/// `v`, with a negative zero as a plain zero.
fn plain_zero(v: f64) -> f64 {
    if v == 0.0 { 0.0 } else { v }
}

/// `v` with `digits` decimals, and a value that prints as zero as `0` (never `-0.000000000`).
pub fn fixed(v: f64, digits: usize) -> String {
    let text = format!("{v:.digits$}");
    if text
        .trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        "0".to_string()
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tiny_and_negative_zero_print_as_zero() {
        assert_eq!(fixed(-0.0, 9), "0");
        assert_eq!(fixed(-1e-12, 9), "0");
        assert_eq!(fixed(-0.5, 3), "-0.500");
        assert_eq!(fixed(2.0, 2), "2.00");
    }

    #[test]
    fn multipliers_are_one_line_each_with_tabs() {
        let text = multipliers_tsv(&[Multiplier { re: -0.5, im: 0.25 }]);
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines, ["re\tim\t|m|", "-0.5\t0.25\t0.5590169943749475"]);
    }

    #[test]
    fn exponents_carry_their_spread() {
        let text = exponents_tsv(&[0.1, -2.0], &[1e-3]);
        assert_eq!(
            text,
            "exponent\tvalue\tspread\nλ1\t0.1\t0.001\nλ2\t-2\tNaN\n"
        );
    }
}
