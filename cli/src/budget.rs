//! The memory the machine has available, for the check against the solver's plan
//! (`antinode_solver::budget::plan`, which counts unknowns and estimates memory).

/// Available memory in bytes (MemAvailable of /proc/meminfo), when it can be read.
pub fn available_bytes() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    text.lines().find_map(|l| {
        let rest = l.strip_prefix("MemAvailable:")?;
        let kb: f64 = rest.trim().trim_end_matches("kB").trim().parse().ok()?;
        Some(kb * 1024.0)
    })
}
