//! The benchmark harness behind `lexiclade bench`, and the peak-memory
//! reading that `cluster` records in `timing.json`.

/// The peak resident set size of this process in bytes, where the
/// operating system reports it (`VmHWM` in `/proc/self/status` on Linux).
pub fn peak_rss_bytes() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kib: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib * 1024)
}
