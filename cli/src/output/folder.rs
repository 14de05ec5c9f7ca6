//! One run owns its output folder.
//!
//! A run never writes into the folder the user named. Before any meshing it checks that
//! folder (a file there, or a folder holding files antinode did not write, is refused) and
//! creates a fresh staging folder beside it, `.<name>.antinode-<pid>`, which also proves
//! the place writable. Every file of the run goes into the staging folder; when all are
//! written, a marker file listing them is written last and the staging folder is swapped
//! in: on Linux by one atomic exchange of the two directory entries (`renameat2` with
//! `RENAME_EXCHANGE`), elsewhere by two renames. The previous results stay untouched until
//! that moment, so re-running with fewer modes never leaves old `mode_NNN.vtu` files
//! beside a new `modes.pvd`.
//!
//! A failed run removes its staging folder (on drop); SIGINT and SIGTERM are caught, the
//! staging folders removed and the process ended with 128 + the signal number, leaving
//! the previous results as they were. A run killed outright (SIGKILL, out of memory)
//! leaves a hidden staging folder without marker, removed by the next run into the same
//! place once its process is gone.

use anyhow::{bail, Context, Result};
use std::path::{Path, PathBuf};
use std::sync::{Mutex, Once};

/// Written last into every finished output folder: what wrote it and the files it holds.
pub const MARKER: &str = ".antinode-run";

/// Part of a staging folder's name between the target's name and the process id.
const STAGING_TAG: &str = ".antinode-";

/// Staging folders of this process, removed by the signal handler.
static STAGING: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());
static HANDLER: Once = Once::new();

/// A run's output: files go to [`OutputFolder::dir`], [`OutputFolder::commit`] puts them
/// in place.
#[derive(Debug)]
pub struct OutputFolder {
    target: PathBuf,
    staging: PathBuf,
    committed: bool,
}

/// Checks `target` and creates the staging folder beside it; call before meshing.
pub fn prepare(target: &Path) -> Result<OutputFolder> {
    install_signal_handler();
    check_target(target)?;
    let name = target
        .file_name()
        .with_context(|| format!("output folder {}: needs a name", target.display()))?
        .to_string_lossy()
        .into_owned();
    let parent = match target.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    std::fs::create_dir_all(&parent).with_context(|| {
        format!(
            "cannot create {} for the output folder {}",
            parent.display(),
            target.display()
        )
    })?;
    remove_stale_staging(&parent, &name);
    let staging = parent.join(format!(".{name}{STAGING_TAG}{}", std::process::id()));
    let mut list = lock();
    if staging.exists() {
        let _ = std::fs::remove_dir_all(&staging);
    }
    std::fs::create_dir(&staging).with_context(|| {
        format!(
            "cannot write into {} (needed beside the output folder {}); choose a \
             writable -o",
            parent.display(),
            target.display()
        )
    })?;
    list.push(staging.clone());
    Ok(OutputFolder {
        target: target.to_path_buf(),
        staging,
        committed: false,
    })
}

impl OutputFolder {
    /// Where this run writes its files.
    pub fn dir(&self) -> &Path {
        &self.staging
    }

    /// The folder the files will be in after [`Self::commit`] (for messages).
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Writes the marker and swaps the staging folder in place of the target; the
    /// previous results are removed only then. Files another command wrote into the
    /// target for the same geometry file (as its marker says) are kept: `modes` keeps
    /// `mesh.vtu`, `drive` keeps `modes.json`; this command's own earlier files are not.
    pub fn commit(mut self, command: &str, geometry: &Path) -> Result<()> {
        let geometry = geometry.display().to_string();
        let mut entries: Vec<MarkerEntry> = std::fs::read_dir(&self.staging)
            .with_context(|| format!("cannot list {}", self.staging.display()))?
            .filter_map(|e| e.ok())
            .map(|e| MarkerEntry {
                file: e.file_name().to_string_lossy().into_owned(),
                command: command.to_string(),
                geometry: geometry.clone(),
            })
            .collect();
        for old in read_marker(&self.target) {
            let keep = old.command != command
                && old.geometry == geometry
                && !entries.iter().any(|e| e.file == old.file);
            if keep && link_or_copy(&self.target.join(&old.file), &self.staging.join(&old.file)) {
                entries.push(old);
            }
        }
        entries.sort_by(|a, b| a.file.cmp(&b.file));
        let mut marker = format!(
            "# written by antinode {}; one line per file: file, command, geometry file \
             (tab-separated)\n",
            env!("CARGO_PKG_VERSION")
        );
        for e in &entries {
            marker.push_str(&format!("{}\t{}\t{}\n", e.file, e.command, e.geometry));
        }
        write_atomic(&self.staging.join(MARKER), marker)?;
        let mut list = lock();
        swap_in(&self.staging, &self.target)?;
        // The staging path now holds the previous results (or nothing).
        let _ = std::fs::remove_dir_all(&self.staging);
        list.retain(|p| p != &self.staging);
        self.committed = true;
        Ok(())
    }
}

/// One line of the marker file.
struct MarkerEntry {
    file: String,
    command: String,
    geometry: String,
}

/// The files a finished folder lists in its marker (none when it has no marker).
fn read_marker(dir: &Path) -> Vec<MarkerEntry> {
    let Ok(text) = std::fs::read_to_string(dir.join(MARKER)) else {
        return Vec::new();
    };
    text.lines()
        .filter(|l| !l.starts_with('#'))
        .filter_map(|l| {
            let mut parts = l.splitn(3, '\t');
            let file = parts.next()?;
            // Only plain names inside the folder.
            if file.is_empty() || file.contains('/') || file.starts_with('.') {
                return None;
            }
            Some(MarkerEntry {
                file: file.to_string(),
                command: parts.next()?.to_string(),
                geometry: parts.next()?.to_string(),
            })
        })
        .collect()
}

/// Hard link (copy where links are not possible) of a kept file into the staging folder.
fn link_or_copy(from: &Path, to: &Path) -> bool {
    from.is_file() && (std::fs::hard_link(from, to).is_ok() || std::fs::copy(from, to).is_ok())
}

impl Drop for OutputFolder {
    fn drop(&mut self) {
        if !self.committed {
            let mut list = lock();
            let _ = std::fs::remove_dir_all(&self.staging);
            list.retain(|p| p != &self.staging);
        }
    }
}

/// Writes `contents` to a temporary sibling (`<name>.partial`) and renames it over `path`.
pub fn write_atomic(path: &Path, contents: impl AsRef<[u8]>) -> Result<()> {
    let mut tmp = path.file_name().unwrap_or_default().to_os_string();
    tmp.push(".partial");
    let tmp = path.with_file_name(tmp);
    let r = std::fs::write(&tmp, contents).and_then(|()| std::fs::rename(&tmp, path));
    if r.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    r.with_context(|| format!("cannot write {}", path.display()))
}

fn lock() -> std::sync::MutexGuard<'static, Vec<PathBuf>> {
    STAGING.lock().unwrap_or_else(|e| e.into_inner())
}

/// Refuses a target that is a file, or a folder holding anything antinode did not write.
fn check_target(target: &Path) -> Result<()> {
    let meta = match std::fs::symlink_metadata(target) {
        Ok(m) => m,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(()),
        Err(e) => {
            return Err(e)
                .with_context(|| format!("cannot read output folder {}", target.display()))
        }
    };
    if !meta.is_dir() {
        bail!(
            "output folder {} exists and is not a folder; choose another -o",
            target.display()
        );
    }
    if target.join(MARKER).is_file() {
        return Ok(());
    }
    let entries = std::fs::read_dir(target)
        .with_context(|| format!("cannot read output folder {}", target.display()))?;
    for e in entries {
        let e = e.with_context(|| format!("cannot read output folder {}", target.display()))?;
        let name = e.file_name().to_string_lossy().into_owned();
        let is_file = e.file_type().map(|t| t.is_file()).unwrap_or(false);
        if !(is_file && is_output_name(&name)) {
            bail!(
                "output folder {} holds '{name}', which antinode did not write; a run \
                 replaces its output folder as a whole, so choose another -o (or empty it)",
                target.display()
            );
        }
    }
    Ok(())
}

/// File names the commands write (folders written before the marker existed hold only
/// these).
fn is_output_name(name: &str) -> bool {
    let name = name.strip_suffix(".partial").unwrap_or(name);
    let fixed = [
        "mesh.vtu",
        "boundary.vtu",
        "modes.json",
        "modes.csv",
        "spectrum.svg",
        "modes.pvd",
        "response.json",
        "response.csv",
        "response.svg",
        "heating.pvd",
    ];
    fixed.contains(&name)
        || (name.starts_with("mode_") && name.ends_with(".vtu"))
        || (name.starts_with("heating_") && name.ends_with(".vtu"))
        || (name.starts_with("response.s") && name.ends_with('p'))
}

/// Removes staging folders of `name` left by processes that no longer run.
fn remove_stale_staging(parent: &Path, name: &str) {
    let prefix = format!(".{name}{STAGING_TAG}");
    let Ok(entries) = std::fs::read_dir(parent) else {
        return;
    };
    for e in entries.flatten() {
        let file = e.file_name().to_string_lossy().into_owned();
        let Some(pid) = file
            .strip_prefix(&prefix)
            .and_then(|p| p.parse::<u32>().ok())
        else {
            continue;
        };
        let alive = Path::new(&format!("/proc/{pid}")).exists();
        if pid != std::process::id() && !alive {
            let _ = std::fs::remove_dir_all(e.path());
        }
    }
}

/// Puts `staging` at `target`; afterwards `staging` holds the previous target, if any.
fn swap_in(staging: &Path, target: &Path) -> Result<()> {
    let fail = |e: std::io::Error| {
        anyhow::Error::new(e).context(format!(
            "cannot move the results into {} (they are complete in {})",
            target.display(),
            staging.display()
        ))
    };
    if !target.exists() {
        return std::fs::rename(staging, target).map_err(fail);
    }
    if exchange(staging, target).is_ok() {
        return Ok(());
    }
    // No atomic exchange here: move the old folder aside first, then the new one in.
    let mut aside = staging.as_os_str().to_os_string();
    aside.push(".old");
    let aside = PathBuf::from(aside);
    std::fs::rename(target, &aside).map_err(fail)?;
    if let Err(e) = std::fs::rename(staging, target) {
        let _ = std::fs::rename(&aside, target);
        return Err(fail(e));
    }
    std::fs::rename(&aside, staging).map_err(fail)
}

/// Atomic exchange of two directory entries (Linux `renameat2`, `RENAME_EXCHANGE`).
#[cfg(target_os = "linux")]
fn exchange(a: &Path, b: &Path) -> std::io::Result<()> {
    use std::os::unix::ffi::OsStrExt;
    let ca = std::ffi::CString::new(a.as_os_str().as_bytes())?;
    let cb = std::ffi::CString::new(b.as_os_str().as_bytes())?;
    // SAFETY: both arguments are valid NUL-terminated paths that outlive the call.
    let r = unsafe {
        libc::renameat2(
            libc::AT_FDCWD,
            ca.as_ptr(),
            libc::AT_FDCWD,
            cb.as_ptr(),
            libc::RENAME_EXCHANGE,
        )
    };
    if r == 0 {
        Ok(())
    } else {
        Err(std::io::Error::last_os_error())
    }
}

#[cfg(not(target_os = "linux"))]
fn exchange(_: &Path, _: &Path) -> std::io::Result<()> {
    Err(std::io::Error::from(std::io::ErrorKind::Unsupported))
}

/// On SIGINT or SIGTERM: remove this process's staging folders, then exit with 128 + the
/// signal number. A commit in progress holds the lock, so it finishes first.
fn install_signal_handler() {
    HANDLER.call_once(|| {
        use signal_hook::consts::{SIGINT, SIGTERM};
        let Ok(mut signals) = signal_hook::iterator::Signals::new([SIGINT, SIGTERM]) else {
            return;
        };
        std::thread::spawn(move || {
            if let Some(sig) = signals.forever().next() {
                let list = lock();
                for dir in list.iter() {
                    // A writer may still add a file while the folder is removed: retry.
                    for _ in 0..5 {
                        if std::fs::remove_dir_all(dir).is_ok() || !dir.exists() {
                            break;
                        }
                    }
                }
                eprintln!("\ninterrupted: nothing written; earlier results left as they were");
                std::process::exit(128 + sig);
            }
        });
    });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn output_names_are_recognised() {
        for n in [
            "mesh.vtu",
            "mode_007.vtu",
            "response.s2p",
            "heating_2.450GHz.vtu",
        ] {
            assert!(is_output_name(n), "{n}");
        }
        for n in ["notes.txt", "mode_1.txt", "data.csv"] {
            assert!(!is_output_name(n), "{n}");
        }
    }
}
