//! Reading an MSH file: its first bytes checked before the rest is read (a binary MSH
//! file, another format or a device is refused at once), then the whole file as text
//! within [`MAX_MSH_BYTES`].

use super::ImportError;
use crate::input::{self, InputError, MAX_MSH_BYTES};
use std::io::Read;
use std::path::Path;

/// Bytes read before the rest: enough for `$MeshFormat` and the version line.
const HEAD_BYTES: u64 = 4096;

/// The file's text, after the checks in the module docs.
pub(super) fn read_msh_text(path: &Path) -> Result<String, ImportError> {
    let io = |source| ImportError::Io {
        path: path.to_path_buf(),
        source,
    };
    let mut file = std::fs::File::open(path).map_err(io)?;
    if let Ok(meta) = file.metadata() {
        if meta.is_file() && meta.len() > MAX_MSH_BYTES {
            return Err(too_large(path));
        }
    }
    let mut bytes = Vec::new();
    (&mut file)
        .take(HEAD_BYTES)
        .read_to_end(&mut bytes)
        .map_err(io)?;
    check_head(&bytes, path)?;
    let rest = input::read_bytes_limited(file, MAX_MSH_BYTES - bytes.len() as u64).map_err(
        |e| match e {
            InputError::Io(source) => io(source),
            _ => too_large(path),
        },
    )?;
    bytes.extend_from_slice(&rest);
    input::into_text(bytes).map_err(|e| match e {
        InputError::NotText { line, what } => ImportError::Syntax {
            path: path.to_path_buf(),
            line,
            message: format!("{what}: an ASCII MSH file is plain text"),
        },
        InputError::Io(source) => io(source),
        InputError::TooLarge { .. } => too_large(path),
    })
}

fn too_large(path: &Path) -> ImportError {
    ImportError::Mesh {
        path: path.to_path_buf(),
        message: format!(
            "the file is larger than {} (stopped reading there), the most an MSH file \
             may hold here (some 15 million tetrahedra); is it the right file? (a device \
             such as /dev/zero never ends)",
            input::human_bytes(MAX_MSH_BYTES)
        ),
    }
}

/// Checks that `head` (the file's first bytes) opens with `$MeshFormat` and an ASCII
/// version line; names a binary MSH file as such.
pub(super) fn check_head(head: &[u8], path: &Path) -> Result<(), ImportError> {
    let err = |line: usize, message: String| ImportError::Syntax {
        path: path.to_path_buf(),
        line,
        message,
    };
    let head = head.strip_prefix(b"\xef\xbb\xbf").unwrap_or(head);
    let start = head
        .iter()
        .position(|b| !b.is_ascii_whitespace())
        .unwrap_or(head.len());
    let line = 1 + head[..start].iter().filter(|&&b| b == b'\n').count();
    let body = &head[start..];
    if body.is_empty() {
        return Err(err(line, "the file is empty (expected $MeshFormat)".into()));
    }
    let first_end = body
        .iter()
        .position(|b| b.is_ascii_whitespace())
        .unwrap_or(body.len());
    if &body[..first_end] != b"$MeshFormat" {
        return Err(err(
            line,
            format!(
                "not a Gmsh MSH file: expected $MeshFormat at the start, found '{}'",
                shown(&body[..first_end.min(40)])
            ),
        ));
    }
    // The version line: "4.1 0 8" (ASCII) or "4.1 1 8" (binary), in text either way.
    let after = &body[first_end..];
    let skip = after
        .iter()
        .position(|b| !b.is_ascii_whitespace())
        .unwrap_or(after.len());
    let vline = line + after[..skip].iter().filter(|&&b| b == b'\n').count();
    let version_line = after[skip..].split(|&b| b == b'\n').next().unwrap_or(&[]);
    let mut fields = version_line
        .split(|b| b.is_ascii_whitespace())
        .filter(|f| !f.is_empty());
    let version = fields.next().unwrap_or(&[]);
    if fields.next() == Some(b"1") {
        return Err(err(
            vline,
            format!(
                "binary MSH files are not supported (this one is binary, version {}); \
                 save the mesh as ASCII MSH 4.1 (in Gmsh: Mesh.Binary = 0, \
                 Mesh.MshFileVersion = 4.1)",
                shown(version)
            ),
        ));
    }
    Ok(())
}

/// Bytes for a message: printable ASCII kept, everything else as `\xNN`.
pub(super) fn shown(bytes: &[u8]) -> String {
    bytes
        .iter()
        .map(|&b| {
            if b.is_ascii_graphic() || b == b' ' {
                (b as char).to_string()
            } else {
                format!("\\x{b:02x}")
            }
        })
        .collect()
}
