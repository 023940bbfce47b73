//! How much memory a command may still take: the system's available memory and the process's
//! address-space limit (`ulimit -v`), read from `/proc`, so a computation that cannot fit is
//! refused with its size instead of being ended by the system halfway.

use anyhow::{Result, bail};
use lamina_core::memory::bytes_text;

/// A value in kB after `key` in a `/proc` file of `key: value kB` lines.
fn kilobytes(text: &str, key: &str) -> Option<u64> {
    text.lines()
        .find_map(|line| line.strip_prefix(key))
        .and_then(|rest| rest.trim().trim_end_matches("kB").trim().parse().ok())
}

/// Bytes the process can still take, if the system says: the smaller of the available memory
/// and what the address-space limit leaves beside what the process has mapped already.
pub fn available_bytes() -> Option<u64> {
    let available = std::fs::read_to_string("/proc/meminfo")
        .ok()
        .and_then(|text| kilobytes(&text, "MemAvailable:"))
        .map(|kb| kb * 1024);
    let limit = std::fs::read_to_string("/proc/self/limits")
        .ok()
        .and_then(|text| {
            let line = text.lines().find(|l| l.starts_with("Max address space"))?;
            line.split_whitespace().nth(3)?.parse::<u64>().ok()
        });
    let mapped = std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|text| kilobytes(&text, "VmSize:"))
        .map_or(0, |kb| kb * 1024);
    let left_by_limit = limit.map(|l| l.saturating_sub(mapped));
    match (available, left_by_limit) {
        (Some(a), Some(l)) => Some(a.min(l)),
        (a, l) => a.or(l),
    }
}

/// Refuses a computation of `bytes` that does not fit in what the process can take, saying
/// what it is (`what`) and what to do (`advice`).
pub fn ensure_fits(bytes: u64, what: &str, advice: &str) -> Result<()> {
    if let Some(available) = available_bytes()
        && bytes > available
    {
        bail!(
            "{what} needs about {} of working memory, but only {} is available: {advice}",
            bytes_text(bytes),
            bytes_text(available)
        );
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::kilobytes;

    #[test]
    fn proc_lines_are_read() {
        let text = "MemTotal:       24683584 kB\nMemAvailable:   21668700 kB\n";
        assert_eq!(kilobytes(text, "MemAvailable:"), Some(21_668_700));
        assert_eq!(kilobytes(text, "Missing:"), None);
    }
}
