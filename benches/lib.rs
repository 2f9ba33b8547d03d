//! Shared helpers of the benchmarks: peak resident memory of the process.

/// Peak resident set size of this process (VmHWM), bytes; 0 where
/// `/proc/self/status` is unavailable.
pub fn peak_rss_bytes() -> u64 {
    status_kib("VmHWM:") * 1024
}

/// Current resident set size (VmRSS), bytes.
pub fn rss_bytes() -> u64 {
    status_kib("VmRSS:") * 1024
}

/// Resets the peak to the current resident size (Linux: writing 5 to
/// `/proc/self/clear_refs`); a no-op elsewhere.
pub fn reset_peak_rss() {
    let _ = std::fs::write("/proc/self/clear_refs", "5");
}

fn status_kib(key: &str) -> u64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with(key))
                .and_then(|l| l.split_whitespace().nth(1).and_then(|v| v.parse().ok()))
        })
        .unwrap_or(0)
}
