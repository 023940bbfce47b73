//! Numbers in messages: the shortest digits that read back as the same number, in scientific
//! notation when very large or small (`1e308`, `1e-300`, not hundreds of digits); estimates
//! to three digits.

use std::fmt;

/// A number as messages show it: the shortest digits that give back the same `f64`, plain
/// from `1e-4` up to below `1e7` (`0.05`, `2000000`), scientific outside (`1e15`, `2.5e-12`);
/// `inf`, `-inf` and `NaN` as Rust writes them.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Short(pub f64);

impl fmt::Display for Short {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let magnitude = self.0.abs();
        if magnitude == 0.0 || (1e-4..1e7).contains(&magnitude) || !magnitude.is_finite() {
            write!(f, "{}", self.0)
        } else {
            write!(f, "{:e}", self.0)
        }
    }
}

/// An estimate or a derived quantity as messages show it: three significant digits, then
/// as [`Short`] (`2.22`, `0.000122`, `1e12`).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct About(pub f64);

impl fmt::Display for About {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let rounded = format!("{:.2e}", self.0).parse().unwrap_or(self.0);
        write!(f, "{}", Short(rounded))
    }
}

#[cfg(test)]
mod tests {
    use super::{About, Short};

    #[test]
    fn estimates_show_three_digits() {
        assert_eq!(About(2.2204460492571965).to_string(), "2.22");
        assert_eq!(About(0.0001220703125).to_string(), "0.000122");
        assert_eq!(About(1.0000000031e12).to_string(), "1e12");
        assert_eq!(About(16384.0).to_string(), "16400");
        assert_eq!(About(f64::INFINITY).to_string(), "inf");
    }

    #[test]
    fn numbers_are_short_and_read_back_exactly() {
        for (value, shown) in [
            (0.0, "0"),
            (1.0, "1"),
            (-0.25, "-0.25"),
            (2e6, "2000000"),
            (1e7, "1e7"),
            (1e308, "1e308"),
            (1e-300, "1e-300"),
            (1.7976931348623157e308, "1.7976931348623157e308"),
            (2.220446049250313e-14, "2.220446049250313e-14"),
            (f64::INFINITY, "inf"),
        ] {
            assert_eq!(Short(value).to_string(), shown);
            // [common practice] Rust's float formatting gives the shortest digits that
            // round-trip, so the text parses back to the same bits
            assert_eq!(shown.parse::<f64>().ok(), Some(value));
        }
        assert_eq!(Short(f64::NAN).to_string(), "NaN");
    }
}
