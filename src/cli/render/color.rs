//! Whether to colour the output, and the colours used.

use std::fmt;
use std::str::FromStr;

/// `--color`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ColorChoice {
    /// Decide from the environment and the terminal.
    Auto,
    /// Always colour.
    Always,
    /// Never colour.
    Never,
}

impl FromStr for ColorChoice {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        match s {
            "auto" => Ok(ColorChoice::Auto),
            "always" => Ok(ColorChoice::Always),
            "never" => Ok(ColorChoice::Never),
            other => Err(format!("`{other}` is not auto, always or never")),
        }
    }
}

impl fmt::Display for ColorChoice {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            ColorChoice::Auto => "auto",
            ColorChoice::Always => "always",
            ColorChoice::Never => "never",
        })
    }
}

/// Whether to colour: `--color always/never` wins; with auto a non-empty
/// `NO_COLOR` disables (the no-color.org convention), else
/// `CARGO_TERM_COLOR` (always/never) decides, else whether the stream is a
/// terminal.
///
/// ```
/// use drift::cli::render::color::{use_color, ColorChoice};
/// assert!(!use_color(ColorChoice::Auto, true, Some("1"), None));
/// assert!(use_color(ColorChoice::Always, false, Some("1"), None));
/// assert!(use_color(ColorChoice::Auto, false, None, Some("always")));
/// assert!(!use_color(ColorChoice::Auto, true, None, Some("never")));
/// assert!(use_color(ColorChoice::Auto, true, Some(""), None));
/// ```
pub fn use_color(
    choice: ColorChoice,
    is_terminal: bool,
    no_color: Option<&str>,
    cargo_term_color: Option<&str>,
) -> bool {
    match choice {
        ColorChoice::Always => true,
        ColorChoice::Never => false,
        ColorChoice::Auto => {
            if no_color.is_some_and(|v| !v.is_empty()) {
                return false;
            }
            match cargo_term_color {
                Some("always") => true,
                Some("never") => false,
                _ => is_terminal,
            }
        }
    }
}

/// `text` in the colour of `verdict` (green pass, yellow new/improved, red
/// failing), or unchanged when `on` is false.
pub fn verdict(text: &str, verdict: &str, on: bool) -> String {
    let code = match verdict {
        "pass" => "32",
        "new" | "improved" => "33",
        _ => "31",
    };
    paint(text, code, on)
}

/// `text` in bold when `on`.
pub fn bold(text: &str, on: bool) -> String {
    paint(text, "1", on)
}

fn paint(text: &str, code: &str, on: bool) -> String {
    if on {
        format!("\x1b[{code}m{text}\x1b[0m")
    } else {
        text.to_string()
    }
}
