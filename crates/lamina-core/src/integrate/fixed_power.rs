//! `x^q` for one fixed exponent `q`, from two small tables: the power the step controllers
//! take of every step's error, without the library's `ln` and `exp`.
//!
//! The controller's power lies on the path from one step to the next (the next step's second
//! stage waits for the step size it gives), so its latency is paid on every step: the two
//! library calls took about a tenth of the Lorenz cut benchmark's time. With
//! `x = 2^e (1 + f)`, `x^q = 2^(q e) (1 + f)^q`: the first factor is read from a table over
//! `e`, the second interpolated linearly in a table over the leading bits of `f`. The
//! interpolation is within `|q (q - 1)| / 8 / 2^(2 MANTISSA_BITS)` of the true value,
//! relatively (below 4e-7 for the controllers' `|q| <= 0.17`): far finer than the controllers'
//! own factors (a safety factor of 0.9, limits on the change of step size). The result rises
//! or falls with `x` as `x^q` does, since both tables do and the interpolation keeps that.
//! A value outside the tables' range (or not positive, or not finite) takes the library's
//! `powf`.

/// Leading bits of the mantissa that index the interpolation table.
const MANTISSA_BITS: u32 = 8;
/// Entries between `1` and `2` of the interpolation table (one more closes the last interval).
const MANTISSA_STEPS: usize = 1 << MANTISSA_BITS;
/// Smallest binary exponent in the table of `2^(q e)`.
const EXPONENT_MIN: i64 = -64;
/// Binary exponents in the table (`EXPONENT_MIN ..= EXPONENT_MIN + EXPONENTS - 1`).
const EXPONENTS: usize = 128;
/// Bits of the mantissa below the interpolation table's index.
const LOW_BITS: u32 = 52 - MANTISSA_BITS;

/// The tables of `x^q` for one `q`.
pub(crate) struct FixedPower {
    q: f64,
    /// `2^(q e)` for `e = EXPONENT_MIN ..`.
    scale: [f64; EXPONENTS],
    /// `(1 + i / MANTISSA_STEPS)^q` for `i = 0 ..= MANTISSA_STEPS`.
    mantissa: [f64; MANTISSA_STEPS + 1],
}

impl FixedPower {
    /// The tables for exponent `q` (each entry the library's `powf`).
    pub(crate) fn new(q: f64) -> Self {
        let mut scale = [0.0; EXPONENTS];
        for (k, entry) in scale.iter_mut().enumerate() {
            *entry = 2f64.powf(q * (EXPONENT_MIN + k as i64) as f64);
        }
        let mut mantissa = [0.0; MANTISSA_STEPS + 1];
        for (i, entry) in mantissa.iter_mut().enumerate() {
            *entry = (1.0 + i as f64 / MANTISSA_STEPS as f64).powf(q);
        }
        Self { q, scale, mantissa }
    }

    /// The exponent `q`.
    pub(crate) fn exponent(&self) -> f64 {
        self.q
    }

    /// `x^q`: from the tables for a positive normal `x` within their range, else `powf`.
    #[inline]
    pub(crate) fn pow(&self, x: f64) -> f64 {
        let bits = x.to_bits();
        // the sign bit and the biased exponent: a negative x or a zero, subnormal, infinite
        // or NaN one falls outside the table's range of indices
        let slot = ((bits >> 52) as i64 - 1023 - EXPONENT_MIN) as u64;
        let (Some(&scale), true) = (self.scale.get(slot as usize), bits >> 52 != 0) else {
            return x.powf(self.q);
        };
        let top = ((bits >> LOW_BITS) & (MANTISSA_STEPS as u64 - 1)) as usize;
        // the bits below the index as a fraction of one interval, exactly
        let low = bits & ((1u64 << LOW_BITS) - 1);
        let fraction = f64::from_bits(1f64.to_bits() | (low << MANTISSA_BITS)) - 1.0;
        let (lo, hi) = (self.mantissa[top], self.mantissa[top + 1]);
        scale * (lo + fraction * (hi - lo))
    }
}

impl std::fmt::Debug for FixedPower {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("FixedPower").field("q", &self.q).finish()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn matches_powf_to_the_interpolation_bound() {
        for q in [-0.2, -0.115, 0.04, 0.05, 0.115, 0.17, 0.25] {
            let power = FixedPower::new(q);
            // [analytic] linear interpolation of (1 + f)^q on steps of 1/256: relative error
            // at most |q (q - 1)| / 8 / 256^2 (second derivative bound, with (1 + f) >= 1)
            let bound = (q * (q - 1.0)).abs() / 8.0 / (MANTISSA_STEPS * MANTISSA_STEPS) as f64;
            let mut x: f64 = 1e-19;
            while x < 1e19 {
                let exact = x.powf(q);
                let relative = (power.pow(x) - exact).abs() / exact;
                assert!(relative <= bound * 1.01 + 4e-16, "q {q}, x {x}: {relative}");
                x *= 1.0137;
            }
        }
    }

    #[test]
    fn outside_the_tables_it_is_powf() {
        let power = FixedPower::new(-0.115);
        for x in [
            0.0,
            1e-300,
            5e-324,
            1e30,
            1e300,
            f64::INFINITY,
            f64::NAN,
            -2.0,
        ] {
            let (got, want) = (power.pow(x), x.powf(-0.115));
            assert!(
                got == want || (got.is_nan() && want.is_nan()),
                "{x}: {got} vs {want}"
            );
        }
        // [analytic] a power of two is exact from the first table: 2^(q e) times 1
        assert_eq!(power.pow(0.25), 2f64.powf(-0.115 * -2.0));
    }

    #[test]
    fn keeps_the_direction_of_the_power() {
        let (falling, rising) = (FixedPower::new(-0.115), FixedPower::new(0.115));
        let mut x: f64 = 1e-12;
        while x < 1e12 {
            let next = x * (1.0 + 1e-3);
            assert!(falling.pow(next) <= falling.pow(x), "falls at {x}");
            assert!(rising.pow(next) >= rising.pow(x), "rises at {x}");
            x = next;
        }
    }
}
