//! Tables of results rendered as CSV, Markdown, LaTeX (booktabs) and HTML.
//!
//! A [`Table`] has [`Column`]s (a machine key, a human label, an optional LaTeX label) and
//! rows of [`Cell`]s: text, integer, value, or value with uncertainty.
//!
//! # Numbers with uncertainties
//!
//! Human formats (Markdown, LaTeX, HTML) write `x ± σ` in the concise form `0.123(4)`: the
//! digits in parentheses are the uncertainty in units of the last digit of the value
//! ([`format_uncertain`]). The uncertainty keeps one or two significant digits by the rule
//! of the Particle Data Group (Review of Particle Physics, Introduction, from memory): take
//! its three leading digits; 100–354 → two significant digits, 355–949 → one, 950–999 →
//! round up to 1000 and keep two. The value is rounded to the same decimal place. Examples:
//! `0.1234 ± 0.0041 → 0.123(4)`, `12.345 ± 1.2 → 12.3(12)`, `0.38629 ± 0.0097 → 0.386(10)`.
//! Scientific notation `1.23(4)e-05` is used when the larger of `|x|` and `σ` is below
//! `10⁻³` or at least `10⁵`, or when the uncertainty's last digit would lie left of the
//! decimal point (`12345 ± 1200 → 1.23(12)e+04`). A zero uncertainty prints the value alone
//! (exact); a negative or non-finite uncertainty prints the value followed by `(?)`; a
//! non-finite value prints `NaN`, `inf` or `-inf`.
//!
//! Plain values ([`format_value`]) keep [`SIGNIFICANT_DIGITS`] significant digits with
//! trailing zeros removed, in the same fixed/scientific ranges.
//!
//! CSV is for machines: every number is written with Rust's shortest round-trip
//! representation, and a column holding uncertainties gets a companion column
//! `<key>_stderr` (the JSON's name for a standard error), so the CSV and the human formats
//! hold the same numbers.

use crate::error::{Error, Result};
use serde::Serialize;
use std::fmt::Write as _;

/// Significant digits of plain values in human formats.
pub const SIGNIFICANT_DIGITS: usize = 4;

/// A column: `key` for CSV (machine name, e.g. `mean_r`), `label` for Markdown and HTML
/// (e.g. `⟨r̃⟩`), and an optional raw LaTeX label (e.g. `$\langle\tilde r\rangle$`);
/// without it the label is escaped for LaTeX ([`escape_latex`]).
#[derive(Debug, Clone, Serialize)]
pub struct Column {
    /// Machine name (CSV header).
    pub key: String,
    /// Human label.
    pub label: String,
    /// LaTeX label, used verbatim when present.
    pub latex: Option<String>,
}

impl Column {
    /// A column with key and label.
    pub fn new(key: impl Into<String>, label: impl Into<String>) -> Self {
        Self {
            key: key.into(),
            label: label.into(),
            latex: None,
        }
    }

    /// Sets a verbatim LaTeX label.
    pub fn latex(mut self, latex: impl Into<String>) -> Self {
        self.latex = Some(latex.into());
        self
    }
}

/// One table cell.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Cell {
    /// Nothing.
    Empty,
    /// Free text.
    Text(String),
    /// An integer (counts, dimensions, sizes).
    Int(i64),
    /// A number without uncertainty.
    Value(f64),
    /// A number with its standard error.
    Uncertain {
        /// The value.
        value: f64,
        /// Its standard error.
        error: f64,
    },
}

impl From<&str> for Cell {
    fn from(s: &str) -> Self {
        Cell::Text(s.to_string())
    }
}
impl From<String> for Cell {
    fn from(s: String) -> Self {
        Cell::Text(s)
    }
}
impl From<i64> for Cell {
    fn from(v: i64) -> Self {
        Cell::Int(v)
    }
}
impl From<usize> for Cell {
    fn from(v: usize) -> Self {
        Cell::Int(i64::try_from(v).unwrap_or(i64::MAX))
    }
}
impl From<f64> for Cell {
    fn from(v: f64) -> Self {
        Cell::Value(v)
    }
}
impl From<(f64, f64)> for Cell {
    fn from((value, error): (f64, f64)) -> Self {
        Cell::Uncertain { value, error }
    }
}
impl<T: Into<Cell>> From<Option<T>> for Cell {
    fn from(v: Option<T>) -> Self {
        v.map_or(Cell::Empty, Into::into)
    }
}

impl Cell {
    fn is_numeric(&self) -> bool {
        matches!(self, Cell::Int(_) | Cell::Value(_) | Cell::Uncertain { .. })
    }

    /// The cell as human text (Markdown/HTML form; see the module docs).
    pub fn text(&self) -> String {
        match self {
            Cell::Empty => String::new(),
            Cell::Text(s) => s.clone(),
            Cell::Int(i) => i.to_string(),
            Cell::Value(v) => format_value(*v),
            Cell::Uncertain { value, error } => format_uncertain(*value, *error),
        }
    }

    fn latex(&self) -> String {
        match self {
            Cell::Empty => String::new(),
            Cell::Text(s) => escape_latex(s),
            Cell::Int(i) => format!("${i}$"),
            Cell::Value(v) => latex_number(&split_value(*v)),
            Cell::Uncertain { value, error } => latex_number(&split_uncertain(*value, *error)),
        }
    }
}

/// A table with an optional caption.
#[derive(Debug, Clone, Serialize)]
pub struct Table {
    /// Caption (Markdown: bold line above; LaTeX: `\caption` in a `table` float; HTML:
    /// `<caption>`).
    pub caption: Option<String>,
    /// The columns.
    pub columns: Vec<Column>,
    /// The rows, each exactly as long as `columns`.
    pub rows: Vec<Vec<Cell>>,
}

impl Table {
    /// An empty table with these columns.
    pub fn new(columns: Vec<Column>) -> Self {
        Self {
            caption: None,
            columns,
            rows: Vec::new(),
        }
    }

    /// Sets the caption.
    pub fn with_caption(mut self, caption: impl Into<String>) -> Self {
        self.caption = Some(caption.into());
        self
    }

    /// Appends a row; it must have one cell per column.
    pub fn push_row(&mut self, row: Vec<Cell>) -> Result<()> {
        if row.len() != self.columns.len() {
            return Err(Error::other(format!(
                "table row has {} cells for {} columns",
                row.len(),
                self.columns.len()
            )));
        }
        self.rows.push(row);
        Ok(())
    }

    fn cell(&self, r: usize, c: usize) -> &Cell {
        self.rows[r].get(c).unwrap_or(&Cell::Empty)
    }

    fn numeric_column(&self, c: usize) -> bool {
        let mut any = false;
        for r in 0..self.rows.len() {
            match self.cell(r, c) {
                Cell::Empty => {}
                x if x.is_numeric() => any = true,
                _ => return false,
            }
        }
        any
    }

    fn has_errors(&self, c: usize) -> bool {
        (0..self.rows.len()).any(|r| matches!(self.cell(r, c), Cell::Uncertain { .. }))
    }

    /// CSV (RFC 4180 quoting): header of column keys, a `<key>_stderr` column after every column
    /// holding uncertainties, numbers in shortest round-trip form.
    pub fn to_csv(&self) -> String {
        let errs: Vec<bool> = (0..self.columns.len())
            .map(|c| self.has_errors(c))
            .collect();
        let mut out = String::new();
        let mut head = Vec::new();
        for (c, col) in self.columns.iter().enumerate() {
            head.push(csv_field(&col.key));
            if errs[c] {
                head.push(csv_field(&format!("{}_stderr", col.key)));
            }
        }
        out.push_str(&head.join(","));
        out.push('\n');
        for r in 0..self.rows.len() {
            let mut f = Vec::new();
            for (c, &has_err) in errs.iter().enumerate() {
                let (v, e) = match self.cell(r, c) {
                    Cell::Empty => (String::new(), String::new()),
                    Cell::Text(s) => (csv_field(s), String::new()),
                    Cell::Int(i) => (i.to_string(), String::new()),
                    Cell::Value(v) => (v.to_string(), String::new()),
                    Cell::Uncertain { value, error } => (value.to_string(), error.to_string()),
                };
                f.push(v);
                if has_err {
                    f.push(e);
                }
            }
            out.push_str(&f.join(","));
            out.push('\n');
        }
        out
    }

    /// GitHub-flavoured Markdown table; numeric columns right-aligned.
    pub fn to_markdown(&self) -> String {
        let mut out = String::new();
        if let Some(c) = &self.caption {
            let _ = writeln!(out, "**{}**\n", escape_markdown(c));
        }
        let head: Vec<String> = self
            .columns
            .iter()
            .map(|c| escape_markdown(&c.label))
            .collect();
        let _ = writeln!(out, "| {} |", head.join(" | "));
        let align: Vec<&str> = (0..self.columns.len())
            .map(|c| {
                if self.numeric_column(c) {
                    "---:"
                } else {
                    "---"
                }
            })
            .collect();
        let _ = writeln!(out, "| {} |", align.join(" | "));
        for r in 0..self.rows.len() {
            let cells: Vec<String> = (0..self.columns.len())
                .map(|c| escape_markdown(&self.cell(r, c).text()))
                .collect();
            let _ = writeln!(out, "| {} |", cells.join(" | "));
        }
        out
    }

    /// LaTeX `tabular` with booktabs rules (`\toprule`, `\midrule`, `\bottomrule`; the
    /// document needs `\usepackage{booktabs}`), wrapped in a `table` float with `\caption`
    /// when there is a caption. Text is escaped ([`escape_latex`]); numbers are set in math
    /// mode, `1.23(4)e-05` as `1.23(4)\times10^{-5}`.
    pub fn to_latex(&self) -> String {
        let mut out = String::new();
        let spec: String = (0..self.columns.len())
            .map(|c| if self.numeric_column(c) { 'r' } else { 'l' })
            .collect();
        if let Some(c) = &self.caption {
            out.push_str("\\begin{table}[htbp]\n\\centering\n");
            let _ = writeln!(out, "\\caption{{{}}}", escape_latex(c));
        }
        let _ = writeln!(out, "\\begin{{tabular}}{{{spec}}}");
        out.push_str("\\toprule\n");
        let head: Vec<String> = self
            .columns
            .iter()
            .map(|c| c.latex.clone().unwrap_or_else(|| escape_latex(&c.label)))
            .collect();
        let _ = writeln!(out, "{} \\\\", head.join(" & "));
        out.push_str("\\midrule\n");
        for r in 0..self.rows.len() {
            let cells: Vec<String> = (0..self.columns.len())
                .map(|c| self.cell(r, c).latex())
                .collect();
            let _ = writeln!(out, "{} \\\\", cells.join(" & "));
        }
        out.push_str("\\bottomrule\n\\end{tabular}\n");
        if self.caption.is_some() {
            out.push_str("\\end{table}\n");
        }
        out
    }

    /// HTML `<table>` (escaped text; numeric cells carry `class="num"`).
    pub fn to_html(&self) -> String {
        let mut out = String::from("<table>\n");
        if let Some(c) = &self.caption {
            let _ = writeln!(out, "<caption>{}</caption>", escape_html(c));
        }
        out.push_str("<thead><tr>");
        for (c, col) in self.columns.iter().enumerate() {
            let class = if self.numeric_column(c) {
                " class=\"num\""
            } else {
                ""
            };
            let _ = write!(
                out,
                "<th{class} title=\"{}\">{}</th>",
                escape_html(&col.key),
                escape_html(&col.label)
            );
        }
        out.push_str("</tr></thead>\n<tbody>\n");
        for r in 0..self.rows.len() {
            out.push_str("<tr>");
            for c in 0..self.columns.len() {
                let cell = self.cell(r, c);
                let class = if cell.is_numeric() {
                    " class=\"num\""
                } else {
                    ""
                };
                let _ = write!(out, "<td{class}>{}</td>", escape_html(&cell.text()));
            }
            out.push_str("</tr>\n");
        }
        out.push_str("</tbody>\n</table>\n");
        out
    }
}

/// One CSV field. Text that a spreadsheet would evaluate as a formula (leading `=`, `+`,
/// `-`, `@`, tab or carriage return, for example a `model` attribute `=HYPERLINK(...)`) gets a
/// leading apostrophe, so it is shown as text; numbers never pass through here.
fn csv_field(s: &str) -> String {
    if s.starts_with(['=', '+', '-', '@', '\t', '\r']) {
        return csv_quoted(&format!("'{s}"));
    }
    csv_quoted(s)
}

fn csv_quoted(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn escape_markdown(s: &str) -> String {
    s.replace('\\', "\\\\")
        .replace('|', "\\|")
        .replace(['\n', '\r'], " ")
}

/// Escapes text for HTML element content and attribute values.
pub fn escape_html(s: &str) -> String {
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

/// Escapes text for LaTeX (pdflatex, text mode): the ten special characters
/// `# $ % & ~ _ ^ \ { }`, also `< >` (misprinted by the default font encoding), and the
/// symbols we use in labels (`|`, Greek letters, `⟨ ⟩`, `²`, `±`, `≤`, `≥`, `≈`, `−`, `×`, a
/// combining tilde as `\tilde{x}`) as plain math, so that the result compiles without
/// Unicode support or extra packages. Neighbouring math pieces are merged into one
/// (`⟨r̃⟩` → `$\langle\tilde{r}\rangle$`).
pub fn escape_latex(s: &str) -> String {
    let chars: Vec<char> = s.chars().collect();
    let mut out = String::with_capacity(s.len() + 8);
    // Byte length of `out` right after the last math piece (to merge the next one into it).
    let mut math_end = usize::MAX;
    let mut math = |out: &mut String, body: &str| {
        if math_end == out.len() {
            out.pop();
        } else {
            out.push('$');
        }
        out.push_str(body);
        out.push('$');
        math_end = out.len();
    };
    let mut i = 0;
    while i < chars.len() {
        let ch = chars[i];
        // A character followed by a combining tilde (U+0303), e.g. r̃.
        if chars.get(i + 1) == Some(&'\u{303}') {
            let inner = match greek(ch) {
                Some(cmd) => format!("\\{cmd}"),
                None if ch.is_ascii_alphanumeric() => ch.to_string(),
                None => format!("\\mbox{{{}}}", escape_latex(&ch.to_string())),
            };
            math(&mut out, &format!("\\tilde{{{inner}}}"));
            i += 2;
            continue;
        }
        match ch {
            '#' | '$' | '%' | '&' | '_' | '{' | '}' => {
                out.push('\\');
                out.push(ch);
            }
            '~' => out.push_str("\\textasciitilde{}"),
            '^' => out.push_str("\\textasciicircum{}"),
            '\\' => out.push_str("\\textbackslash{}"),
            '<' => out.push_str("\\textless{}"),
            '>' => out.push_str("\\textgreater{}"),
            '²' => out.push_str("\\textsuperscript{2}"),
            c => match symbol(c) {
                Some(cmd) => math(&mut out, cmd),
                None => match greek(c) {
                    Some(cmd) => math(&mut out, &format!("\\{cmd}")),
                    None => out.push(c),
                },
            },
        }
        i += 1;
    }
    out
}

/// The math-mode form of the non-Greek symbols [`escape_latex`] knows.
fn symbol(c: char) -> Option<&'static str> {
    Some(match c {
        '|' => "|",
        '⟨' => "\\langle",
        '⟩' => "\\rangle",
        '±' => "\\pm",
        '≤' => "\\le",
        '≥' => "\\ge",
        '≈' => "\\approx",
        '−' => "-",
        '×' => "\\times",
        '·' => "\\cdot",
        '→' => "\\to",
        '√' => "\\surd",
        _ => return None,
    })
}

fn greek(c: char) -> Option<&'static str> {
    Some(match c {
        'α' => "alpha",
        'β' => "beta",
        'γ' => "gamma",
        'δ' => "delta",
        'ε' => "epsilon",
        'η' => "eta",
        'κ' => "kappa",
        'λ' => "lambda",
        'μ' => "mu",
        'ρ' => "rho",
        'σ' => "sigma",
        'τ' => "tau",
        'χ' => "chi",
        'ω' => "omega",
        'Γ' => "Gamma",
        'Δ' => "Delta",
        'Σ' => "Sigma",
        'Ω' => "Omega",
        _ => return None,
    })
}

/// A number split for typesetting: mantissa text (with the uncertainty digits in
/// parentheses when there are any) and an optional power of ten.
#[derive(Debug, Clone, PartialEq)]
struct Split {
    mantissa: String,
    exponent: Option<i32>,
}

impl Split {
    fn plain(&self) -> String {
        match self.exponent {
            None => self.mantissa.clone(),
            Some(e) => format!(
                "{}e{}{:02}",
                self.mantissa,
                if e < 0 { '-' } else { '+' },
                e.abs()
            ),
        }
    }
}

fn latex_number(s: &Split) -> String {
    match s.mantissa.as_str() {
        "NaN" => return "NaN".into(),
        "inf" => return "$\\infty$".into(),
        "-inf" => return "$-\\infty$".into(),
        _ => {}
    }
    let m = s.mantissa.replace("(?)", "(\\mathord{?})");
    match s.exponent {
        None => format!("${m}$"),
        Some(e) => format!("${m}\\times10^{{{e}}}$"),
    }
}

fn nonfinite(v: f64) -> String {
    if v.is_nan() {
        "NaN".into()
    } else if v > 0.0 {
        "inf".into()
    } else {
        "-inf".into()
    }
}

/// Decimal exponent of the leading digit of `x > 0` (robust to `log10` rounding).
fn decade(x: f64) -> i32 {
    let mut e = x.log10().floor() as i32;
    let m = x / 10f64.powi(e);
    if m >= 10.0 {
        e += 1;
    } else if m < 1.0 {
        e -= 1;
    }
    e
}

fn use_scientific(mag: f64) -> bool {
    mag != 0.0 && !(1e-3..1e5).contains(&mag)
}

/// Formats `x` with `decimals` digits after the point, avoiding `-0`.
fn fixed(x: f64, decimals: usize) -> String {
    let s = format!("{x:.decimals$}");
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s[1..].to_string()
    } else {
        s
    }
}

fn trim_zeros(s: String) -> String {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

fn split_value(v: f64) -> Split {
    if !v.is_finite() {
        return Split {
            mantissa: nonfinite(v),
            exponent: None,
        };
    }
    if v == 0.0 {
        return Split {
            mantissa: "0".into(),
            exponent: None,
        };
    }
    let p = SIGNIFICANT_DIGITS as i32;
    let mut e = decade(v.abs());
    if use_scientific(v.abs()) {
        let mut m = v / 10f64.powi(e);
        let mut s = fixed(m, (p - 1) as usize);
        if s.trim_start_matches('-').starts_with("10") {
            e += 1;
            m = v / 10f64.powi(e);
            s = fixed(m, (p - 1) as usize);
        }
        Split {
            mantissa: trim_zeros(s),
            exponent: Some(e),
        }
    } else {
        let decimals = (p - 1 - e).max(0) as usize;
        Split {
            mantissa: trim_zeros(fixed(v, decimals)),
            exponent: None,
        }
    }
}

fn split_uncertain(v: f64, err: f64) -> Split {
    if !v.is_finite() {
        return split_value(v);
    }
    if err == 0.0 {
        return split_value(v);
    }
    if !(err.is_finite() && err > 0.0) {
        let mut s = split_value(v);
        s.mantissa.push_str("(?)");
        return s;
    }
    // Uncertainty digits (PDG rule, module docs).
    let mut ex = decade(err);
    let lead3 = (err / 10f64.powi(ex - 2)).round();
    let ndig = if lead3 <= 354.0 {
        2
    } else if lead3 <= 949.0 {
        1
    } else {
        ex += 1;
        2
    };
    let d = ex - (ndig - 1); // decimal place of the last digit kept
    let eint = (err / 10f64.powi(d)).round() as u64;
    let mag = v.abs().max(err);
    if d > 0 || use_scientific(mag) {
        let mut m = decade(mag);
        loop {
            let decimals = (m - d).max(0) as usize;
            let s = fixed(v / 10f64.powi(m), decimals);
            if s.trim_start_matches('-').starts_with("10") && m < 400 {
                m += 1;
                continue;
            }
            return Split {
                mantissa: format!("{s}({eint})"),
                exponent: Some(m),
            };
        }
    }
    let decimals = (-d).max(0) as usize;
    Split {
        mantissa: format!("{}({eint})", fixed(v, decimals)),
        exponent: None,
    }
}

/// `value ± error` in the concise form `0.123(4)` / `1.23(4)e-05` (rule in the module docs).
pub fn format_uncertain(value: f64, error: f64) -> String {
    split_uncertain(value, error).plain()
}

/// A plain value with [`SIGNIFICANT_DIGITS`] significant digits, trailing zeros removed,
/// scientific (`1.235e-05`) outside `[10⁻³, 10⁵)`.
pub fn format_value(value: f64) -> String {
    split_value(value).plain()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn latex_escapes_specials() {
        // Common practice, no source: LaTeX special characters must be escaped.
        assert_eq!(escape_latex("a_b & 50%"), "a\\_b \\& 50\\%");
        assert_eq!(escape_latex("⟨r̃⟩"), "$\\langle\\tilde{r}\\rangle$");
        assert_eq!(escape_latex("α, β"), "$\\alpha$, $\\beta$");
        assert_eq!(escape_latex("−ω̃"), "$-\\tilde{\\omega}$");
        assert_eq!(
            escape_latex("|f(ω)|²"),
            "$|$f($\\omega$)$|$\\textsuperscript{2}"
        );
    }
}
