//! The working memory of the large computations (variational equations grow with the square
//! of the number of states): whether it can be had, and its size in words.

/// Whether a block of `bytes` can be allocated now: the block is reserved and given back at
/// once. A computation whose working memory fails this is refused with its size instead of
/// ending the process when an allocation fails halfway. (Where the system promises more memory
/// than it has, a block that passes may still not fit; a caller that knows how much is
/// available should compare with [`bytes_text`]'s number first.)
pub fn can_allocate(bytes: u64) -> bool {
    let Ok(bytes) = usize::try_from(bytes) else {
        return false;
    };
    let mut probe: Vec<u8> = Vec::new();
    probe.try_reserve_exact(bytes).is_ok()
}

/// `bytes` in words: `840 kB`, `12.9 GB` (decimal units, three significant digits).
pub fn bytes_text(bytes: u64) -> String {
    const UNITS: [&str; 6] = ["bytes", "kB", "MB", "GB", "TB", "PB"];
    let mut value = bytes as f64;
    let mut unit = 0;
    while value >= 1000.0 && unit + 1 < UNITS.len() {
        value /= 1000.0;
        unit += 1;
    }
    if unit == 0 {
        format!("{bytes} bytes")
    } else if value >= 100.0 {
        format!("{value:.0} {}", UNITS[unit])
    } else if value >= 10.0 {
        format!("{value:.1} {}", UNITS[unit])
    } else {
        format!("{value:.2} {}", UNITS[unit])
    }
}

#[cfg(test)]
mod tests {
    use super::{bytes_text, can_allocate};

    #[test]
    fn sizes_read_in_decimal_units() {
        // [common practice] decimal prefixes, three significant digits
        assert_eq!(bytes_text(512), "512 bytes");
        assert_eq!(bytes_text(840_000), "840 kB");
        assert_eq!(bytes_text(12_900_000_000), "12.9 GB");
        assert_eq!(bytes_text(1_280_000_000_000_000), "1.28 PB");
    }

    #[test]
    fn an_impossible_block_is_refused_and_a_small_one_is_not() {
        assert!(can_allocate(1 << 20));
        // larger than any address space
        assert!(!can_allocate(u64::MAX));
        assert!(!can_allocate(1 << 62));
    }
}
