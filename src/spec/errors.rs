//! [`SpecError`], the one error type of `drift.toml`, and what builds it:
//! byte offsets turned into line and column, toml and serde errors turned
//! into positioned messages with help, and nearest-name suggestions by edit
//! distance.

use std::fmt;
use std::ops::Range;
use std::path::{Path, PathBuf};

/// An error in `drift.toml`: the file, the 1-based line and column (in
/// characters) it concerns, what is wrong and how to fix it.
///
/// A line of 0 means the error has no position (the file could not be
/// read); its Display is then `path: message`.
///
/// ```
/// use std::path::Path;
/// use drift::spec::{Catalog, Spec};
/// let catalog = Catalog::default();
/// let e = Spec::parse("[settings]\nperiods = -1.0\n", Path::new("drift.toml"), &catalog).unwrap_err();
/// assert_eq!((e.line, e.column), (2, 11));
/// assert!(e.to_string().starts_with("drift.toml:2:11: "), "{e}");
/// assert!(e.help.is_some());
/// ```
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SpecError {
    /// The file.
    pub path: PathBuf,
    /// Line, from 1 (0: no position).
    pub line: usize,
    /// Column in characters, from 1 (0: no position).
    pub column: usize,
    /// What is wrong.
    pub message: String,
    /// How to fix it.
    pub help: Option<String>,
}

impl fmt::Display for SpecError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.path.display())?;
        if self.line > 0 {
            write!(f, ":{}:{}", self.line, self.column)?;
        }
        write!(f, ": {}", self.message)?;
        if let Some(help) = &self.help {
            write!(f, "\n  help: {help}")?;
        }
        Ok(())
    }
}

impl std::error::Error for SpecError {}

/// Builds positioned errors for one file's text.
pub(super) struct Locator<'a> {
    pub text: &'a str,
    pub path: &'a Path,
}

impl Locator<'_> {
    /// An error at the start of `span`.
    pub fn at(&self, span: &Range<usize>, message: String, help: Option<String>) -> SpecError {
        let (line, column) = self.position(span.start);
        SpecError {
            path: self.path.to_path_buf(),
            line,
            column,
            message,
            help,
        }
    }

    /// Line (from 1) of byte `offset`.
    pub fn line(&self, offset: usize) -> usize {
        self.position(offset).0
    }

    /// Line and column (1-based, columns in characters) of byte `offset`,
    /// clamped to the text and to a character boundary.
    fn position(&self, offset: usize) -> (usize, usize) {
        crate::textpos::line_column(self.text, offset)
    }

    /// A toml syntax error or a serde error, with help. An unknown key is
    /// reworded to list the valid keys and suggest the nearest one.
    pub fn toml_error(&self, e: &toml::de::Error) -> SpecError {
        let span = e.span().unwrap_or(0..0);
        let message = e.message().trim_end().to_string();
        if let Some((key, valid)) = parse_unknown_field(&message) {
            let names: Vec<&str> = valid.iter().map(String::as_str).collect();
            let help = match nearest(&key, &names) {
                Some(near) => format!("did you mean `{near}`? {}", valid_keys(&names)),
                None => format!("remove it; {}", valid_keys(&names)),
            };
            return self.at(&span, format!("unknown key `{key}`"), Some(help));
        }
        let help = if message.ends_with("expected u64") {
            "give a whole number without sign or decimal point, e.g. 64"
        } else if message.starts_with("invalid type") || message.starts_with("invalid value") {
            "give a value of the expected type"
        } else if message.starts_with("missing field") {
            "add the key to this table"
        } else {
            "fix the TOML syntax at this place (https://toml.io)"
        };
        self.at(&span, message, Some(help.to_string()))
    }
}

fn valid_keys(names: &[&str]) -> String {
    if names.is_empty() {
        "this table takes no keys".to_string()
    } else {
        format!("the keys here are: {}", names.join(", "))
    }
}

/// Reads serde's "unknown field `k`, expected one of `a`, `b`" (or
/// "expected `a` or `b`", "expected `a`", "there are no fields") into the key
/// and the valid keys.
fn parse_unknown_field(message: &str) -> Option<(String, Vec<String>)> {
    let rest = message.strip_prefix("unknown field `")?;
    let (key, rest) = rest.split_once('`')?;
    let valid = rest
        .split('`')
        .skip(1)
        .step_by(2)
        .map(str::to_string)
        .collect();
    Some((key.to_string(), valid))
}

/// Levenshtein edit distance over characters (insertions, deletions and
/// substitutions of one character each cost 1; Levenshtein 1966, the
/// two-row dynamic programme of Wagner and Fischer 1974).
pub(super) fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for (i, ca) in a.chars().enumerate() {
        cur[0] = i + 1;
        for (j, &cb) in b.iter().enumerate() {
            let substitute = prev[j] + usize::from(ca != cb);
            cur[j + 1] = substitute.min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

/// The candidate nearest to `name`, when it is within
/// `max(2, len(name) / 3)` edits (common practice, no source); ties go to
/// the earlier candidate.
pub(super) fn nearest<'c>(name: &str, candidates: &[&'c str]) -> Option<&'c str> {
    let limit = (name.chars().count() / 3).max(2);
    candidates
        .iter()
        .map(|&c| (edit_distance(name, c), c))
        .filter(|&(d, _)| d <= limit)
        .min_by_key(|&(d, _)| d)
        .map(|(_, c)| c)
}

/// Help for an unknown name of some `what` ("stepper", "problem"): the
/// nearest valid name, then all of them.
pub(super) fn unknown_name_help(name: &str, what: &str, valid: &[&str]) -> String {
    if valid.is_empty() {
        return format!("no {what} is registered; register one in tests/drift.rs");
    }
    let list = format!("the {what}s are: {}", valid.join(", "));
    match nearest(name, valid) {
        Some(near) => format!("did you mean `{near}`? {list}"),
        None => list,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn edit_distance_of_textbook_pairs() {
        // kitten -> sitting needs 3 edits (the standard example of
        // Levenshtein distance; from memory).
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("flaw", "lawn"), 2);
        assert_eq!(edit_distance("same", "same"), 0);
    }

    #[test]
    fn nearest_respects_the_limit() {
        let names = ["harmonic", "kepler", "pendulum"];
        assert_eq!(nearest("keplr", &names), Some("kepler"));
        assert_eq!(nearest("harmnoic", &names), Some("harmonic"));
        assert_eq!(nearest("zzzzzz", &names), None);
    }

    #[test]
    fn columns_count_characters_not_bytes() {
        let loc = Locator {
            text: "a = \"é\"\nb = \"€\" x",
            path: Path::new("drift.toml"),
        };
        let x = loc.text.find('x').unwrap();
        assert_eq!(loc.position(x), (2, 9));
        // Inside a multi-byte character: the character's own column.
        let euro = loc.text.find('€').unwrap();
        assert_eq!(loc.position(euro + 1), (2, 6));
        assert_eq!(loc.position(usize::MAX), (2, 10));
    }

    #[test]
    fn unknown_field_messages_of_serde() {
        let (k, v) =
            parse_unknown_field("unknown field `ordr`, expected `order` or `skip`").unwrap();
        assert_eq!(
            (k.as_str(), v),
            ("ordr", vec!["order".into(), "skip".into()])
        );
        let (_, v) = parse_unknown_field("unknown field `x`, there are no fields").unwrap();
        assert!(v.is_empty());
        assert!(parse_unknown_field("missing field `stepper`").is_none());
    }
}
