//! `f64` time arithmetic on the bits, for single-precision FPUs.
//!
//! Sample times are `f64` seconds (see [`crate::filter`], "Time stamps"), but a Cortex-M4F
//! has a single-precision FPU and a Cortex-M0 none: every `f64` subtraction, comparison
//! or conversion is a library routine there. The drone pipeline needed four of them
//! (subtraction, narrowing, widening, comparison: 1.7 KB of flash on the Cortex-M4F,
//! measured with the firmware's flash probe), for three small jobs: the step between two
//! time stamps, the order of two time stamps, and a time minus a step. They are done
//! here with integer arithmetic, rounded to nearest, ties to even (IEEE 754-2019, sec.
//! 4.3.1, from memory): `t - f64::from(dt)` bit for bit as `f64` arithmetic gives it, and
//! the step as the exact difference rounded once to `f32` (the `f64` subtraction
//! narrowed to `f32` rounds twice and can differ in the last bit; steps below the
//! smallest normal `f32` read as 0). The tests compare them with the host's hardware
//! arithmetic on about a million pairs of every size and sign.
//!
//! Consecutive sample times almost always share their sign and exponent; for those,
//! [`near_step`] forms the step from one 64-bit subtraction of the bit patterns (about
//! 30 instructions on the Cortex-M4F, where the general [`difference`] with its rounding
//! to `f32` costs about 200), with the same result.
//!
//! Written here, not taken from a crate: the crates that do floating point in software
//! (and `compiler_builtins`, which the compiler calls) implement the whole of `f64`
//! arithmetic, which is what the flash is spent on; this module needs one operation on
//! finite values.

/// Fraction bits of an `f64`.
const F64_FRACTION: u64 = (1 << 52) - 1;
/// Every bit of an `f64` but the sign.
const MAGNITUDE: u64 = !(1 << 63);
/// Headroom of the larger significand in [`difference`]: 53 + 10 bits fill a `u64` but
/// for one bit, so that a sum cannot overflow.
const HEADROOM: u32 = 10;
/// Exponent bias of an `f64` plus its 52 fraction bits and [`HEADROOM`].
const SHIFT: i32 = 1075 + HEADROOM as i32;

/// A nonzero difference `(-1)^negative c 2^exponent` of two `f64`s, exact or with a
/// "sticky" lowest bit: when bits of the smaller operand had to be shifted out, the
/// lowest bit of `c` is set and the exact value lies strictly between `c - 1` and
/// `c + 1`. Rounding `c` to 53 bits or fewer then rounds the exact value (see
/// [`difference`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Difference {
    pub(crate) negative: bool,
    c: u64,
    exponent: i32,
}

/// Finite `f64` bit patterns in the order of their values (`+0` and `-0` equal), as
/// integers: the magnitude bits order positive values, and their negation orders the
/// negative ones.
#[inline]
const fn order_key(bits: u64) -> i64 {
    let magnitude = (bits & MAGNITUDE) as i64;
    if bits >> 63 == 0 {
        magnitude
    } else {
        -magnitude
    }
}

/// Significand and exponent of a finite `f64`'s magnitude: `value = m 2^(e - 1075)` with
/// the hidden bit in `m` for normal numbers, `e = 1` for subnormal ones.
#[inline]
const fn unpack(bits: u64) -> (u64, i32) {
    let e = ((bits >> 52) & 0x7ff) as i32;
    let m = bits & F64_FRACTION;
    if e == 0 { (m, 1) } else { (m | (1 << 52), e) }
}

/// `a - b` for finite `a` and `b` (a non-finite operand gives a meaningless result,
/// never a panic), or `None` when they are equal.
///
/// The significand of the larger magnitude is shifted up by [`HEADROOM`] bits and the
/// smaller one is aligned to it; bits shifted out of the smaller one are replaced by a
/// set lowest bit (the sticky bit of floating-point adders, common practice). Then `c`
/// is odd and the exact value lies strictly between `c - 1` and `c + 1`, while every
/// rounding point of a 53-bit or shorter result is an even integer at least 8 apart
/// (shifts happen only when the exponents differ by more than 10, and then `c` has 62
/// or 63 bits): `c` and the exact value round alike.
pub(crate) fn difference(a: f64, b: f64) -> Option<Difference> {
    let (a, b) = (a.to_bits(), b.to_bits());
    let (ka, kb) = (order_key(a), order_key(b));
    if ka == kb {
        return None;
    }
    let (ma, ea) = unpack(a);
    let (mb, eb) = unpack(b);
    let ((ml, el), (ms, es)) = if a & MAGNITUDE >= b & MAGNITUDE {
        ((ma, ea), (mb, eb))
    } else {
        ((mb, eb), (ma, ea))
    };
    let small = ms << HEADROOM;
    let d = el.abs_diff(es);
    let aligned = match d {
        0 => small,
        1..=63 => (small >> d) | u64::from(small << (64 - d) != 0),
        _ => u64::from(small != 0),
    };
    let big = ml << HEADROOM;
    // same signs subtract the magnitudes, opposite signs add them (no overflow: both
    // are below 2^63)
    let c = if (a ^ b) >> 63 == 0 {
        big - aligned
    } else {
        big + aligned
    };
    Some(Difference {
        negative: ka < kb,
        c,
        exponent: el - SHIFT,
    })
}

impl Difference {
    /// The magnitude as an `f32`, rounded once to nearest, ties to even; 0 below the
    /// smallest normal `f32` (2^-126, 1.2e-38), infinity from 2^127 (1.7e38) on.
    pub(crate) fn magnitude_f32(self) -> f32 {
        let lz = self.c.leading_zeros();
        // the top 32 bits, with any lower bit kept as a sticky bit (rounding points of
        // 24 bits stay 2^7 or more above it); the FPU's conversion rounds them
        let top = self.c << lz;
        let narrow = ((top >> 32) as u32) | u32::from(top as u32 != 0);
        // value = narrow 2^(scale - 31) with 2^31 <= narrow < 2^32
        let scale = self.exponent + 63 - lz as i32;
        if scale > 126 {
            return f32::INFINITY;
        }
        if scale < -126 {
            return 0.0;
        }
        // both products by powers of two are exact (normal results)
        (narrow as f32 * f32::from_bits((127 - 31) << 23))
            * f32::from_bits(((scale + 127) as u32) << 23)
    }

    /// The signed value as an `f64`, rounded to nearest, ties to even. Results beyond
    /// the normal `f64` range saturate (infinity, or zero below 2^-1022): never the
    /// case for [`minus_step`].
    fn to_f64(self) -> f64 {
        let lz = self.c.leading_zeros();
        let top = self.c << lz;
        let rest = top & 0x7ff;
        let mut q = top >> 11;
        if rest > 0x400 || (rest == 0x400 && q & 1 == 1) {
            q += 1;
        }
        // 2^e <= value < 2^(e + 1); q is 2^52..=2^53, and a carry to 2^53 moves into
        // the exponent field: hence the bias minus one
        let e = self.exponent + 63 - lz as i32;
        let magnitude = if e > 1023 {
            0x7ff << 52
        } else if e < -1022 {
            0
        } else {
            (((e + 1022) as u64) << 52) + q
        };
        f64::from_bits(magnitude | (u64::from(self.negative) << 63))
    }
}

/// Exponent fields (sign bit clear) for which [`near_step`] takes its short path: times
/// from 2^-74 s to just below 2^48 s (8.9 million years). Below, the step's unit
/// 2^(e - 1075) is no normal `f32`; above, a step could pass the 1e30 s cap.
const NEAR_EXPONENTS: core::ops::RangeInclusive<u32> = 949..=1122;

/// The step from `last` to `now` when both are positive normal `f64`s in the same
/// binade (the usual case: consecutive sample times), `None` otherwise (then the
/// general path, which also caps the step at 1e30 s, is taken). The result is
/// the one [`crate::filter::step_between`]'s general path gives (the exact difference
/// rounded once to `f32`; the tests compare the two on random pairs), at a fraction of
/// its cost: with equal exponent fields `now - last` is exactly the difference of the
/// two bit patterns times the unit 2^(e - 1075) (Sterbenz's lemma, from memory:
/// Sterbenz 1974, *Floating-Point Computation*), so one 64-bit subtraction forms it.
/// Its top 32 bits, with any lower bit kept as a sticky bit, are rounded to `f32` by
/// the FPU's conversion (one rounding), and the unit scales the result exactly.
#[inline]
pub(crate) fn near_step(last: f64, now: f64) -> Option<crate::filter::Step> {
    use crate::filter::Step;
    let (n, l) = (now.to_bits(), last.to_bits());
    // sign and exponent: equal, positive, in range
    let e = (n >> 52) as u32;
    if e != (l >> 52) as u32 || !NEAR_EXPONENTS.contains(&e) {
        return None;
    }
    if n <= l {
        return Some(if n == l { Step::Same } else { Step::Earlier });
    }
    let d = n - l; // below 2^52
    let (hi, lo) = ((d >> 32) as u32, d as u32);
    // d = narrow 2^shift, to within the sticky bit
    let (narrow, shift) = if hi == 0 {
        (lo, 0)
    } else {
        let lz = hi.leading_zeros(); // 12..=31: hi is below 2^20
        let top = (hi << lz) | (lo >> (32 - lz));
        (top | u32::from(lo << lz != 0), 32 - lz)
    };
    // unit times 2^shift: 2^-126 ..= 2^67, a normal f32; the product is exact
    let scale = (e + shift + 127 - 1075) << 23;
    Some(Step::Later(narrow as f32 * f32::from_bits(scale)))
}

/// `f64::from(x)` on the bits (exact: every `f32` is an `f64`).
pub(crate) fn widen(x: f32) -> f64 {
    let b = x.to_bits();
    let sign = u64::from(b >> 31) << 63;
    let e = (b >> 23) & 0xff;
    let f = u64::from(b & 0x7f_ffff);
    let bits = if e == 0xff {
        (0x7ff << 52) | (f << 29)
    } else if e != 0 {
        ((u64::from(e) + 1023 - 127) << 52) | (f << 29)
    } else if f == 0 {
        0
    } else {
        // subnormal f32: f 2^-149 with f < 2^23, a normal f64
        let n = 64 - f.leading_zeros(); // 1..=23
        let exponent = u64::from(n) - 1 + 1023 - 149;
        (exponent << 52) | ((f << (53 - n)) & F64_FRACTION)
    };
    f64::from_bits(sign | bits)
}

/// `t - f64::from(dt)`, rounded as `f64` arithmetic rounds it, for a finite `t` and a
/// finite `dt` (a non-finite one gives a meaningless result, never a panic); a zero
/// `dt` returns `t` (so `(-0) - (-0)` gives `-0`, not IEEE's `+0`: the sign of a zero
/// time is of no consequence here). A nonzero difference is a normal `f64`: a nonzero
/// `dt` is at least 2^-149 and `t` holds 53 bits, so `|t - dt|` is 0 or above 2^-202.
pub(crate) fn minus_step(t: f64, dt: f32) -> f64 {
    // an f32 comparison: a test of t's bits against zero would be compiled into an f64
    // comparison, a library routine (seen in the flash probe)
    if dt == 0.0 {
        return t;
    }
    match difference(t, widen(dt)) {
        Some(r) => r.to_f64(),
        None => 0.0,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// xorshift64 (Marsaglia 2003): deterministic numbers, no dependency.
    struct Xorshift(u64);
    impl Xorshift {
        fn next(&mut self) -> u64 {
            self.0 ^= self.0 << 13;
            self.0 ^= self.0 >> 7;
            self.0 ^= self.0 << 17;
            self.0
        }
        /// A finite `f64`: any pattern, or one near `near` (same sign, exponent within
        /// `spread` of it), so that both far and close pairs are common.
        fn time(&mut self, near: f64, spread: u64) -> f64 {
            let r = self.next();
            let bits = if r % 4 == 0 || spread == 0 {
                r
            } else {
                let e = (near.to_bits() >> 52) & 0x7ff;
                let e = (e + self.next() % (2 * spread + 1)).saturating_sub(spread);
                (near.to_bits() & (1 << 63)) | ((e.min(0x7fe)) << 52) | (r & F64_FRACTION)
            };
            let t = f64::from_bits(bits);
            if t.is_finite() { t } else { near }
        }
    }

    /// Same bits; `a` and `b` are the operands, for the message.
    fn same_f32(got: f32, want: f32, a: f64, b: f64) {
        assert_eq!(
            got.to_bits(),
            want.to_bits(),
            "{a:e}, {b:e}: {got:e} vs {want:e}"
        );
    }

    fn same_f64(got: f64, want: f64, a: f64, b: f64) {
        assert_eq!(
            got.to_bits(),
            want.to_bits(),
            "{a:e}, {b:e}: {got:e} vs {want:e}"
        );
    }

    /// The reference for `|a - b|` rounded once to `f32`, from the host's hardware:
    /// `hi + lo = a - b` exactly (Knuth's TwoSum, from memory: Knuth, *The Art of
    /// Computer Programming* vol. 2, sec. 4.2.2), `hi` narrowed by the hardware, and
    /// only when `hi` lies exactly halfway between two `f32`s does `lo` decide the
    /// side. With the documented range: 0 below 2^-126, infinity from 2^127.
    fn once_rounded(a: f64, b: f64) -> f32 {
        let hi = a - b;
        let z = hi - a;
        let lo = (a - (hi - z)) + (-b - z);
        let (hi, lo) = if hi < 0.0 { (-hi, -lo) } else { (hi, lo) };
        if hi < f64::from(f32::MIN_POSITIVE) {
            return 0.0;
        }
        if hi >= 2f64.powi(127) {
            return f32::INFINITY;
        }
        let f = hi as f32;
        let err = hi - f64::from(f);
        if err == 0.0 || lo == 0.0 {
            return f;
        }
        // the neighbour on hi's side of f, and whether hi is halfway to it
        let other = if err > 0.0 {
            f32::from_bits(f.to_bits() + 1)
        } else {
            f32::from_bits(f.to_bits() - 1)
        };
        let halfway = 2.0 * err.abs() == (f64::from(other) - f64::from(f)).abs();
        if halfway && (lo > 0.0) == (err > 0.0) {
            other
        } else {
            f
        }
    }

    fn check_pair(a: f64, b: f64) {
        let want = a - b;
        match difference(a, b) {
            None => assert!(want == 0.0, "{a:e} - {b:e}"),
            Some(r) => {
                assert_eq!(r.negative, want < 0.0, "{a:e} - {b:e}");
                if want.abs() >= f64::MIN_POSITIVE {
                    same_f64(r.to_f64(), want, a, b);
                }
                same_f32(r.magnitude_f32(), once_rounded(a, b), a, b);
            }
        }
        assert_eq!(
            order_key(a.to_bits()).cmp(&order_key(b.to_bits())),
            a.partial_cmp(&b).unwrap(),
            "order of {a:e}, {b:e}"
        );
    }

    #[test]
    fn near_step_equals_the_exact_difference_rounded() {
        use crate::filter::Step;
        let mut g = Xorshift(0x2545_f491_4f6c_dd1d);
        let mut taken = 0u32;
        for i in 0..400_000u32 {
            // a time in one of many binades, and a later or earlier one near it: steps
            // of 1 ulp to the whole binade, and sample steps of 1 us .. 1000 s
            let a = f64::from_bits(((900 + g.next() % 260) << 52) | (g.next() & F64_FRACTION));
            let b = match i % 3 {
                0 => f64::from_bits(a.to_bits() ^ (g.next() & F64_FRACTION)),
                1 => f64::from_bits(a.to_bits() ^ (g.next() & ((1 << (g.next() % 53)) - 1))),
                _ => a + 10f64.powi((g.next() % 10) as i32 - 6),
            };
            let Some(got) = near_step(a, b) else {
                assert!(
                    (a.to_bits() >> 52 != b.to_bits() >> 52)
                        || !NEAR_EXPONENTS.contains(&((a.to_bits() >> 52) as u32))
                );
                continue;
            };
            taken += 1;
            let want = if b > a {
                Step::Later(once_rounded(b, a))
            } else if b == a {
                Step::Same
            } else {
                Step::Earlier
            };
            match (got, want) {
                (Step::Later(x), Step::Later(y)) => same_f32(x, y, b, a),
                _ => assert_eq!(got, want, "{a:e} -> {b:e}"),
            }
        }
        // exponents 949..=1122 are 174 of the 260 drawn, and two pairs in three share
        // a binade by construction: more than half the pairs take the short path
        assert!(taken > 200_000, "{taken}");
        // outside the short path's range, and across binades or signs: none
        for (a, b) in [
            (1.0, 2.5),
            (-2.0, -1.5),
            (-1.0, 1.0),
            (1e-30, 1.5e-30),
            (1e20, 1.5e20),
            (0.0, 1e-300),
        ] {
            assert_eq!(near_step(a, b), None, "{a:e} -> {b:e}");
        }
    }

    #[test]
    fn difference_equals_the_exact_difference_rounded() {
        let mut g = Xorshift(0x9e37_79b9_7f4a_7c15);
        for i in 0..500_000u32 {
            let a = g.time(3_600.0, 0);
            // near a, within 0..60 binades, sometimes with the other sign
            let spread = [0u64, 1, 3, 30, 60][(i % 5) as usize];
            let mut b = g.time(a, spread);
            if i % 7 == 0 {
                b = -b;
            }
            check_pair(a, b);
            check_pair(b, a);
        }
    }

    #[test]
    fn difference_edges() {
        let tiny = f64::from_bits(1);
        let pairs = [
            (1.0, 1.0),
            (0.0, -0.0),
            (tiny, 0.0),
            (0.0, tiny),
            (tiny, -tiny),
            (f64::MAX, f64::MAX),
            (f64::MAX, 1.0),
            (1.0, f64::from_bits(1.0f64.to_bits() - 1)),
            (1.0e30, 1.0),
            (1.0, 1.0e-30),
            // steps around the f32 range
            (3.5e38, 0.0),
            (1.7e38, 0.0),
            (1.0e-37, 0.0),
            (1.0e-38, 0.0),
            (f64::from(f32::MIN_POSITIVE), 0.0),
            // ties of the f32 rounding after an exact f64 difference
            (1.0 + 2f64.powi(-24), 0.0),
            (1.0 + 3.0 * 2f64.powi(-24), 0.0),
            (1.0 + 2f64.powi(-24) + 2f64.powi(-52), 0.0),
            // where rounding to f64 first and then to f32 would differ from rounding once
            (1.0 + 2f64.powi(-24), -(2f64.powi(-77))),
            (1.0 + 2f64.powi(-24) - 2f64.powi(-52), 2f64.powi(-60)),
            // far apart: only the sticky bit remains of the smaller one
            (1.0, 2f64.powi(-70)),
            (2f64.powi(70), -1.0),
        ];
        for (a, b) in pairs {
            check_pair(a, b);
            check_pair(b, a);
            check_pair(-a, b);
            check_pair(a, -b);
        }
        // the documented range of the narrowing
        let r = |a: f64| difference(a, 0.0).unwrap().magnitude_f32();
        assert_eq!(r(2f64.powi(127)), f32::INFINITY);
        assert_eq!(r(f64::from(f32::MAX)), f32::INFINITY);
        assert_eq!(r(f64::from(f32::MIN_POSITIVE)), f32::MIN_POSITIVE);
        assert_eq!(r(f64::from(f32::MIN_POSITIVE) * 0.75), 0.0);
        // the double rounding case: f64 first would give the tie and then even (1.0)
        let (a, b) = (1.0 + 2f64.powi(-24), -(2f64.powi(-77)));
        assert_eq!((a - b) as f32, 1.0);
        assert_eq!(
            difference(a, b).unwrap().magnitude_f32(),
            1.0 + f32::EPSILON
        );
    }

    #[test]
    fn widen_equals_the_conversion() {
        let mut g = Xorshift(0x2545_f491_4f6c_dd1d);
        for _ in 0..200_000 {
            let x = f32::from_bits(g.next() as u32);
            if x.is_nan() {
                assert!(widen(x).is_nan());
            } else {
                same_f64(widen(x), f64::from(x), x.into(), 0.0);
            }
        }
        for x in [
            0.0f32,
            -0.0,
            f32::from_bits(1),
            f32::from_bits(0x7f_ffff),
            f32::MIN_POSITIVE,
            f32::MAX,
            f32::INFINITY,
            f32::NEG_INFINITY,
        ] {
            same_f64(widen(x), f64::from(x), x.into(), 0.0);
        }
    }

    #[test]
    fn minus_step_equals_the_f64_subtraction() {
        let mut g = Xorshift(0x0123_4567_89ab_cdef);
        for i in 0..300_000u32 {
            let t = g.time(86_400.0, [0u64, 2, 20][(i % 3) as usize]);
            let dt = match i % 3 {
                0 => f32::from_bits(g.next() as u32),
                1 => (g.next() % 100_000) as f32 * 0.02,
                _ => t as f32,
            };
            if !dt.is_finite() {
                continue;
            }
            same_f64(minus_step(t, dt), t - f64::from(dt), t, dt.into());
        }
        let tiny = f64::from_bits(1);
        for (t, dt) in [
            (0.0, 0.0),
            (-0.0, 0.0),
            (0.0, -0.0),
            (-5.0, -0.0),
            (5.0, 0.0),
            (5.0, 5.0),
            (tiny, 0.0),
            (tiny, 1.0e-45),
            (-f64::MAX, 3.0e38),
            (1.0e-300, 1.0e-30),
        ] {
            same_f64(minus_step(t, dt as f32), t - f64::from(dt as f32), t, dt);
        }
        // the one documented difference
        same_f64(minus_step(-0.0, -0.0), -0.0, -0.0, -0.0);
    }
}
