//! The memory this run may use, for the check against the solver's plan
//! (`antinode_solver::budget::plan`, which counts unknowns and estimates memory): the
//! machine's MemAvailable (/proc/meminfo) or, inside a container with a memory limit,
//! that limit less what the container already uses, whichever is smaller (cgroup v2
//! `memory.max` − `memory.current`, cgroup v1 `memory.limit_in_bytes` −
//! `memory.usage_in_bytes`; Linux kernel documentation, admin-guide/cgroup-v2 and
//! cgroup-v1/memory).

use std::path::{Path, PathBuf};

/// Memory available to this run and where the figure comes from.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Available {
    pub bytes: f64,
    /// "MemAvailable" or the cgroup file that limits the run.
    pub source: &'static str,
}

/// The smaller of MemAvailable and the cgroup's headroom, when either can be read.
pub fn available() -> Option<Available> {
    let mem = mem_available().map(|bytes| Available {
        bytes,
        source: "MemAvailable",
    });
    let group = cgroup_headroom();
    match (mem, group) {
        (Some(m), Some(g)) if g.bytes < m.bytes => Some(g),
        (Some(m), _) => Some(m),
        (None, g) => g,
    }
}

fn mem_available() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    text.lines().find_map(|l| {
        let rest = l.strip_prefix("MemAvailable:")?;
        let kb: f64 = rest.trim().trim_end_matches("kB").trim().parse().ok()?;
        Some(kb * 1024.0)
    })
}

/// Limit − usage of this process's memory cgroup (v2 first, then v1); `None` without a
/// limit ("max", or v1's huge "unlimited" value).
fn cgroup_headroom() -> Option<Available> {
    let own = std::fs::read_to_string("/proc/self/cgroup").unwrap_or_default();
    let root = Path::new("/sys/fs/cgroup");
    // v2: "0::/path"; v1: "N:memory:/path" (the memory controller, maybe with others).
    let v2 = own.lines().find_map(|l| l.strip_prefix("0::"));
    let v1 = own.lines().find_map(|l| {
        let mut p = l.splitn(3, ':');
        let (_, ctl, path) = (p.next()?, p.next()?, p.next()?);
        ctl.split(',').any(|c| c == "memory").then_some(path)
    });
    let v2_dirs = candidates(root, v2);
    let v1_dirs = candidates(&root.join("memory"), v1);
    for dir in v2_dirs {
        if let Some(limit) = read_number(&dir.join("memory.max")) {
            let used = read_number(&dir.join("memory.current")).unwrap_or(0.0);
            return Some(Available {
                bytes: (limit - used).max(0.0),
                source: "cgroup memory.max",
            });
        }
    }
    for dir in v1_dirs {
        if let Some(limit) = read_number(&dir.join("memory.limit_in_bytes")) {
            // v1 writes "no limit" as a number near 2^63.
            if limit >= 1e18 {
                return None;
            }
            let used = read_number(&dir.join("memory.usage_in_bytes")).unwrap_or(0.0);
            return Some(Available {
                bytes: (limit - used).max(0.0),
                source: "cgroup memory.limit_in_bytes",
            });
        }
    }
    None
}

/// The process's own cgroup folder, then the hierarchy's root (a container often sees
/// its own group mounted as the root).
fn candidates(root: &Path, own: Option<&str>) -> Vec<PathBuf> {
    let mut v = Vec::new();
    if let Some(p) = own {
        let p = p.trim().trim_start_matches('/');
        if !p.is_empty() {
            v.push(root.join(p));
        }
    }
    v.push(root.to_path_buf());
    v
}

/// A number from a cgroup file; `None` for "max", a missing file or anything else.
fn read_number(path: &Path) -> Option<f64> {
    let text = std::fs::read_to_string(path).ok()?;
    text.trim().parse::<u64>().ok().map(|v| v as f64)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unlimited_and_missing_files_read_as_no_limit() {
        let dir = std::env::temp_dir().join(format!("antinode-cg-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::write(dir.join("memory.max"), "max\n").unwrap();
        assert_eq!(read_number(&dir.join("memory.max")), None);
        std::fs::write(dir.join("memory.max"), "1073741824\n").unwrap();
        assert_eq!(read_number(&dir.join("memory.max")), Some(1073741824.0));
        assert_eq!(read_number(&dir.join("absent")), None);
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn available_is_positive_here() {
        // The development machine and CI both expose /proc/meminfo.
        let a = available().expect("memory figure");
        assert!(a.bytes > 0.0, "{a:?}");
    }
}
