//! Sweep-file errors: each names the sweep file and line, the parameter and what is
//! allowed instead.

use std::path::PathBuf;

/// A rejected sweep file (a variant whose geometry is rejected is not an error of the
/// sweep file: see [`super::Variant::geometry`]).
#[derive(Debug, thiserror::Error)]
pub enum SweepError {
    /// The sweep file could not be read.
    #[error("cannot read sweep file {}: {source}", path.display())]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },

    /// TOML syntax error, unknown key or wrong value type.
    #[error("{}, line {line}: {message}", file.display())]
    Toml {
        file: PathBuf,
        line: usize,
        message: String,
    },

    /// A value the sweep file may not hold; `allowed` says what would be accepted.
    #[error("{}, line {line}: {what}: {allowed}", file.display())]
    Invalid {
        file: PathBuf,
        line: usize,
        what: String,
        allowed: String,
    },

    /// A parameter's dotted key does not lead to a value of the base geometry.
    #[error(
        "{}, line {line}: parameter key \"{key}\": {reason}; a key is a dotted path into \
         the geometry file: table, entry by name (or index) in a list of tables, key, and \
         array index, e.g. \"cavity.size.2\" or \"load.water.center\"",
        file.display()
    )]
    KeyPath {
        file: PathBuf,
        line: usize,
        key: String,
        reason: String,
    },

    /// The base geometry file could not be read or is not TOML (its own validation is
    /// done per variant).
    #[error("{}: base geometry {}: {message}", file.display(), geometry.display())]
    Base {
        file: PathBuf,
        geometry: PathBuf,
        message: String,
    },
}
