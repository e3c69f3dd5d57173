//! Numbers for the output table, written exactly as the standard formatter writes them
//! (`{}` and `{:.3}`), only faster: formatting was most of the time spent per row. The
//! standard formatter remains the fallback for every case these do not cover, and the
//! tests compare both on many values.

use std::io::Write as _;

/// Two-digit groups for [`decimal`] (the lookup-table method of integer formatting).
const PAIRS: &[u8; 200] = b"\
0001020304050607080910111213141516171819202122232425262728293031323334353637383940414243444546474849\
5051525354555657585960616263646566676869707172737475767778798081828384858687888990919293949596979899";

/// Append `n / 10^decimals` with `decimals` (at most 12) digits after the point (none:
/// no point).
fn decimal(out: &mut Vec<u8>, negative: bool, mut n: u64, decimals: u32) {
    if negative {
        out.push(b'-');
    }
    // digits written from the end, two at a time; zeros before them as needed
    let mut digits = [b'0'; 24];
    let mut start = digits.len();
    let mut put = |start: &mut usize, pair: &[u8]| {
        *start -= pair.len();
        if let Some(slot) = digits.get_mut(*start..*start + pair.len()) {
            slot.copy_from_slice(pair);
        }
    };
    while n >= 100 {
        let k = (n % 100) as usize * 2;
        n /= 100;
        put(&mut start, PAIRS.get(k..k + 2).unwrap_or(b"00"));
    }
    let k = n as usize * 2;
    let head = PAIRS.get(k..k + 2).unwrap_or(b"00");
    put(&mut start, if n >= 10 { head } else { &head[1..] });
    let point = digits.len() - (decimals as usize).min(12);
    let start = start.min(point - 1);
    out.extend_from_slice(digits.get(start..point).unwrap_or(&[]));
    if decimals > 0 {
        out.push(b'.');
        out.extend_from_slice(digits.get(point..).unwrap_or(&[]));
    }
}

/// `v` as `format!("{v:.N}")` writes it, `N` = `decimals` (at most 3): the exact value
/// rounded half to even, a sign on every negative value (`-0.000`), `NaN`, `inf`. An
/// `f32` times 10^3 is exact in an `f64` (24 + 10 bits of 53), so one rounding gives the
/// same digits.
pub(crate) fn fixed(out: &mut Vec<u8>, v: f32, decimals: u32) {
    let decimals = decimals.min(3);
    let scaled = (f64::from(v) * 10f64.powi(decimals as i32))
        .abs()
        .round_ties_even();
    if !v.is_finite() || scaled >= 1e18 {
        let _ = write!(out, "{v:.*}", decimals as usize);
        return;
    }
    decimal(out, v.is_sign_negative(), scaled as u64, decimals);
}

/// `v` as `format!("{v}")` writes it (the shortest decimal that reads back to `v`).
pub(crate) fn shortest_f64(out: &mut Vec<u8>, v: f64) {
    match short_f64(v) {
        Some((n, d)) => decimal(out, v < 0.0, n, d),
        None => {
            let _ = write!(out, "{v}");
        }
    }
}

/// `v` as `format!("{v}")` writes it.
pub(crate) fn shortest_f32(out: &mut Vec<u8>, v: f32) {
    match short_f32(v) {
        Some((n, d)) => decimal(out, v < 0.0, n, d),
        None => {
            let _ = write!(out, "{v}");
        }
    }
}

// The shortest decimal of `v` with few digits, as (digits n, decimals d): the fewest
// decimals d for which some integer n, n / 10^d, reads back as `v`. Reading back is
// checked exactly: n and 10^d are exact in the float type and division is correctly
// rounded, as is reading a decimal, so `n / 10^d == v` holds exactly when the text of
// n / 10^d reads back as `v`. The candidates are the integer nearest to v * 10^d and its
// neighbours (the product is rounded); when two read back, the standard formatter picks
// the nearer, and these functions leave it to it. Fewest decimals is fewest significant
// digits, so this is the shortest text.

fn short_f64(v: f64) -> Option<(u64, u32)> {
    let a = v.abs();
    if !(1e-6..1e15).contains(&a) {
        return None;
    }
    let mut scale = 1.0f64;
    for d in 0..=12 {
        let m = (a * scale).round();
        if m >= 9.0e15 {
            return None;
        }
        let mut found = None;
        for n in [m - 1.0, m, m + 1.0] {
            if n > 0.0 && n / scale == a {
                if found.is_some() {
                    return None;
                }
                found = Some((n as u64, d));
            }
        }
        if found.is_some() {
            return found;
        }
        scale *= 10.0;
    }
    None
}

fn short_f32(v: f32) -> Option<(u64, u32)> {
    let a = v.abs();
    if !(1e-3..1e7).contains(&a) {
        return None;
    }
    let mut scale = 1.0f32;
    for d in 0..=10 {
        let m = (a * scale).round();
        if m >= 1.6e7 {
            return None;
        }
        let mut found = None;
        for n in [m - 1.0, m, m + 1.0] {
            if n > 0.0 && n / scale == a {
                if found.is_some() {
                    return None;
                }
                found = Some((n as u64, d));
            }
        }
        if found.is_some() {
            return found;
        }
        scale *= 10.0;
    }
    None
}
