//! Typed errors of the catalogue: loading user files and looking up fluids.

use std::fmt;
use std::path::PathBuf;

/// One thing wrong with one field of one fluid in a catalogue file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Problem {
    /// The fluid's id, or `fluid #N` (1-based position in the file) when it has no usable
    /// id, or `(file)` for a problem with the file as a whole.
    pub fluid: String,
    /// The field at fault, e.g. `critical_temperature_k` or `fit[0].parameters`.
    pub field: String,
    /// The value given, as written in the file, or `(missing)`.
    pub value: String,
    /// What would be accepted: the valid range or form.
    pub expected: String,
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{}: field `{}` = {}: expected {}",
            self.fluid, self.field, self.value, self.expected
        )
    }
}

/// Why a catalogue file could not be loaded. Nothing of a file that fails is loaded.
#[derive(Debug, thiserror::Error)]
pub enum CatalogueError {
    /// The file could not be read.
    #[error("cannot read fluid file {}: {source}", path.display())]
    Io {
        /// The path given.
        path: PathBuf,
        /// The underlying error.
        #[source]
        source: std::io::Error,
    },
    /// The text is not valid TOML.
    #[error("{origin} is not valid TOML (nothing was loaded): {message}")]
    Syntax {
        /// Where the text came from (a path or a label).
        origin: String,
        /// The TOML parser's message, with line and column.
        message: String,
    },
    /// The file is valid TOML but some fields are missing or out of range. Every problem
    /// found is listed.
    #[error("{origin}: {} problem(s), nothing was loaded:\n{}", problems.len(), list(problems))]
    Invalid {
        /// Where the text came from (a path or a label).
        origin: String,
        /// Every problem found, fluid by fluid in file order, name clashes last.
        problems: Vec<Problem>,
    },
    /// A built-in reference-data file could not be read (a defect of the crate's data).
    #[error("reference data file {file}, line {line}: {message}")]
    Reference {
        /// The file, relative to `crates/fluids/data/`.
        file: String,
        /// 1-based line number.
        line: usize,
        /// What is wrong.
        message: String,
    },
}

fn list(problems: &[Problem]) -> String {
    problems
        .iter()
        .map(|p| format!("  - {p}"))
        .collect::<Vec<_>>()
        .join("\n")
}

/// Why a fluid name could not be resolved.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum LookupError {
    /// No fluid has this name, id, number, CAS number or alias.
    #[error("unknown fluid `{name}`{}", did_you_mean(suggestions))]
    Unknown {
        /// The name given.
        name: String,
        /// Up to three known names closest to it (edit distance, ignoring case and
        /// punctuation), closest first.
        suggestions: Vec<String>,
    },
    /// The name is longer than any name the catalogue could hold (not echoed back).
    #[error("fluid name of {length} bytes is too long: a name has at most {max} bytes")]
    TooLong {
        /// Length of the name given, bytes.
        length: usize,
        /// The most a name may have, bytes ([`crate::MAX_NAME_BYTES`]).
        max: usize,
    },
    /// The name has no letters or digits, so it cannot match anything.
    #[error("fluid name `{name}` has no letters or digits")]
    Empty {
        /// The name given.
        name: String,
    },
}

fn did_you_mean(suggestions: &[String]) -> String {
    if suggestions.is_empty() {
        String::new()
    } else {
        format!("; did you mean {}?", suggestions.join(", "))
    }
}
