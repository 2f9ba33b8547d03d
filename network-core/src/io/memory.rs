//! What the machine has: available memory (`/proc/meminfo` `MemAvailable`,
//! lowered to the room left under a cgroup memory limit when one is set)
//! and this process's peak resident memory (`VmHWM`). Linux only; elsewhere
//! both are `None` and no memory check is made.
//!
//! `GANGLION_MEMORY_LIMIT` (bytes, or with a suffix `k`, `M`, `G`) lowers
//! the available figure further, e.g. to leave room for other jobs.

use std::fs;

/// Environment variable that caps the memory a command may plan to use.
pub const LIMIT_ENV: &str = "GANGLION_MEMORY_LIMIT";

/// Bytes available to this process and where the figure comes from;
/// `None` when nothing can be read.
pub fn available_bytes() -> Option<(u64, String)> {
    let mut best: Option<(u64, String)> = None;
    let mut lower = |v: u64, what: String| {
        if best.as_ref().is_none_or(|(b, _)| v < *b) {
            best = Some((v, what));
        }
    };
    if let Some(kb) = fs::read_to_string("/proc/meminfo")
        .ok()
        .and_then(|t| field_kb(&t, "MemAvailable:"))
    {
        lower(
            kb.saturating_mul(1024),
            "MemAvailable in /proc/meminfo".into(),
        );
    }
    // cgroup v2, then v1.
    for (limit, usage) in [
        ("/sys/fs/cgroup/memory.max", "/sys/fs/cgroup/memory.current"),
        (
            "/sys/fs/cgroup/memory/memory.limit_in_bytes",
            "/sys/fs/cgroup/memory/memory.usage_in_bytes",
        ),
    ] {
        let read = |p: &str| fs::read_to_string(p).ok()?.trim().parse::<u64>().ok();
        if let Some(l) = read(limit)
            && l < (1u64 << 60)
        {
            let used = read(usage).unwrap_or(0);
            lower(
                l.saturating_sub(used),
                format!("room under the cgroup limit {limit}"),
            );
            break;
        }
    }
    if let Ok(v) = std::env::var(LIMIT_ENV)
        && let Some(b) = parse_bytes(&v)
    {
        lower(b, format!("{LIMIT_ENV}={v}"));
    }
    best
}

/// Peak resident memory of this process so far, bytes (`VmHWM`).
pub fn peak_resident_bytes() -> Option<u64> {
    let t = fs::read_to_string("/proc/self/status").ok()?;
    field_kb(&t, "VmHWM:").map(|kb| kb.saturating_mul(1024))
}

fn field_kb(text: &str, key: &str) -> Option<u64> {
    text.lines()
        .find_map(|l| l.strip_prefix(key))?
        .split_whitespace()
        .next()?
        .parse()
        .ok()
}

/// `123`, `64k`, `512M`, `8G` (powers of 1024) as bytes.
pub fn parse_bytes(s: &str) -> Option<u64> {
    let s = s.trim();
    let (num, mult) = match s.char_indices().last()? {
        (i, 'k' | 'K') => (&s[..i], 1u64 << 10),
        (i, 'm' | 'M') => (&s[..i], 1 << 20),
        (i, 'g' | 'G') => (&s[..i], 1 << 30),
        _ => (s, 1),
    };
    num.trim().parse::<u64>().ok()?.checked_mul(mult)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn byte_sizes_parse_with_binary_suffixes_and_refuse_overflow() {
        assert_eq!(parse_bytes("123"), Some(123));
        assert_eq!(parse_bytes("64k"), Some(65_536));
        assert_eq!(parse_bytes("8G"), Some(8 << 30));
        assert_eq!(parse_bytes("-1"), None);
        assert_eq!(parse_bytes("99999999999999999999G"), None);
        assert_eq!(parse_bytes("17179869184G"), None);
    }

    #[test]
    fn meminfo_fields_are_read_in_kilobytes() {
        let t = "MemTotal:       16318412 kB\nMemAvailable:    9876543 kB\n";
        assert_eq!(field_kb(t, "MemAvailable:"), Some(9_876_543));
        assert_eq!(field_kb(t, "VmHWM:"), None);
    }
}
