//! Reading input files with a size limit, so that a device (`/dev/zero`, `/dev/urandom`),
//! a pipe or a wrongly chosen huge file is refused by name instead of being read without
//! end.
//!
//! The file is read through [`std::io::Read::take`] with one byte more than the limit:
//! reading stops after at most `limit + 1` bytes whatever the file is, and a longer input
//! is refused. Text must be UTF-8; the first byte that is not is reported with its line.
//! A NUL byte is refused too: no text format read here contains one, and `/dev/zero`
//! consists of them.

use std::io::Read;
use std::path::Path;

/// Largest geometry file read (bytes): 1 MiB. A geometry file with a hundred loads and
/// ports is a few tens of kB; common practice, no source.
pub const MAX_GEOMETRY_BYTES: u64 = 1 << 20;

/// Largest MSH file read (bytes): 1 GiB. An ASCII MSH 4.1 file holds about 60 bytes per
/// node and 40 per tetrahedron, so 1 GiB is some 15 million tetrahedra with their nodes,
/// more than the solver can factor on a workstation at order 1 (~7 unknowns per
/// tetrahedron); estimate from the format, no source.
pub const MAX_MSH_BYTES: u64 = 1 << 30;

/// Why an input file could not be read as text.
#[derive(Debug, thiserror::Error)]
pub enum InputError {
    #[error("{0}")]
    Io(#[from] std::io::Error),
    #[error(
        "the file is larger than {} (stopped reading there); is it the right file? \
         (a device such as /dev/zero or /dev/urandom never ends)",
        human_bytes(*limit)
    )]
    TooLarge { limit: u64 },
    #[error("line {line}: {what}; the file must be plain text (UTF-8)")]
    NotText { line: usize, what: &'static str },
}

/// `n` bytes as "1 MiB", "1 GiB" or "N bytes".
pub fn human_bytes(n: u64) -> String {
    const UNITS: [(u64, &str); 3] = [(1 << 30, "GiB"), (1 << 20, "MiB"), (1 << 10, "KiB")];
    for (size, unit) in UNITS {
        if n >= size && n.is_multiple_of(size) {
            return format!("{} {unit}", n / size);
        }
    }
    format!("{n} bytes")
}

/// Reads at most `limit` bytes from `reader`; more is [`InputError::TooLarge`].
pub fn read_bytes_limited(reader: impl Read, limit: u64) -> Result<Vec<u8>, InputError> {
    let mut bytes = Vec::new();
    reader
        .take(limit.saturating_add(1))
        .read_to_end(&mut bytes)?;
    if bytes.len() as u64 > limit {
        return Err(InputError::TooLarge { limit });
    }
    Ok(bytes)
}

/// Opens `path` and reads at most `limit` bytes of it.
pub fn read_file_limited(path: &Path, limit: u64) -> Result<Vec<u8>, InputError> {
    let file = std::fs::File::open(path)?;
    // A regular file states its length: refuse a large one before reading any of it.
    if let Ok(meta) = file.metadata() {
        if meta.is_file() && meta.len() > limit {
            return Err(InputError::TooLarge { limit });
        }
    }
    read_bytes_limited(file, limit)
}

/// The bytes as UTF-8 text without NUL bytes, or the line of the first offending byte.
pub fn into_text(bytes: Vec<u8>) -> Result<String, InputError> {
    let line_at = |bytes: &[u8], at: usize| bytes[..at].iter().filter(|&&b| b == b'\n').count() + 1;
    if let Some(at) = bytes.iter().position(|&b| b == 0) {
        return Err(InputError::NotText {
            line: line_at(&bytes, at),
            what: "a NUL byte",
        });
    }
    String::from_utf8(bytes).map_err(|e| {
        let at = e.utf8_error().valid_up_to();
        InputError::NotText {
            line: line_at(e.as_bytes(), at),
            what: "bytes that are not UTF-8 text",
        }
    })
}

/// Reads `path` as text of at most `limit` bytes.
pub fn read_text_limited(path: &Path, limit: u64) -> Result<String, InputError> {
    into_text(read_file_limited(path, limit)?)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn endless_stream_stops_at_the_limit() {
        let err = read_bytes_limited(std::io::repeat(b'x'), 1000).unwrap_err();
        assert!(matches!(err, InputError::TooLarge { limit: 1000 }), "{err}");
        assert_eq!(read_bytes_limited(&b"abc"[..], 3).unwrap(), b"abc");
    }

    #[test]
    fn non_text_names_its_line() {
        let err = into_text(b"a\nb\n\xff\n".to_vec()).unwrap_err();
        assert!(matches!(err, InputError::NotText { line: 3, .. }), "{err}");
        let err = into_text(b"a\n\0".to_vec()).unwrap_err();
        assert!(matches!(err, InputError::NotText { line: 2, .. }), "{err}");
        assert_eq!(human_bytes(1 << 20), "1 MiB");
        assert_eq!(human_bytes(1 << 30), "1 GiB");
    }
}
