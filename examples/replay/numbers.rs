//! Numbers for the output table, written exactly as the standard formatter writes them
//! (`{}` and `{:.3}`), only faster: with the standard formatter, formatting is the
//! largest part of the time per row. The standard formatter remains the fallback for
//! every case these do not cover, and the tests compare both on many values.

use std::io::Write as _;

/// Two-digit groups for [`decimal`] (the lookup-table method of integer formatting).
const PAIRS: &[u8; 200] = b"\
0001020304050607080910111213141516171819202122232425262728293031323334353637383940414243444546474849\
5051525354555657585960616263646566676869707172737475767778798081828384858687888990919293949596979899";

/// Append `n / 10^decimals` with `decimals` (at most 12) digits after the point (none:
/// no point).
fn decimal(out: &mut Vec<u8>, negative: bool, n: u64, decimals: u32) {
    let point = (decimals as usize).min(12);
    let (whole, fraction) = match point {
        // constant divisors for the table's own decimals: a multiplication each
        0 => (n, 0),
        2 => (n / 100, n % 100),
        3 => (n / 1000, n % 1000),
        _ => {
            let scale = 10u64.pow(point as u32);
            (n / scale, n % scale)
        }
    };
    let whole_digits = whole.checked_ilog10().map_or(1, |l| l as usize + 1);
    let sign = usize::from(negative);
    let dot = usize::from(point > 0);
    let len = sign + whole_digits + dot + point;
    // Room for the text, zeros, appended at a fixed size and cut back: a fixed-size
    // copy compiles to a few moves, where a copy of each number's own length called
    // `memcpy` (about 8 % of the instructions per row).
    let start = out.len();
    out.extend_from_slice(&[b'0'; 40]);
    out.truncate(start + len);
    let Some(text) = out.get_mut(start..) else {
        return;
    };
    let (head, tail) = text.split_at_mut(sign + whole_digits);
    if let Some(minus) = head.first_mut().filter(|_| negative) {
        *minus = b'-';
    }
    digits_into(head, whole);
    if let Some((dot_slot, fraction_slot)) = tail.split_first_mut() {
        *dot_slot = b'.';
        digits_into(fraction_slot, fraction);
    }
}

/// Write the digits of `n` at the end of `slot` (already zeros), two at a time.
fn digits_into(slot: &mut [u8], mut n: u64) {
    let mut end = slot.len();
    while n >= 10 && end >= 2 {
        let k = (n % 100) as usize * 2;
        n /= 100;
        end -= 2;
        if let (Some(to), Some(pair)) = (slot.get_mut(end..end + 2), PAIRS.get(k..k + 2)) {
            to.copy_from_slice(pair);
        }
    }
    if n > 0 {
        if let Some(last) = end.checked_sub(1).and_then(|i| slot.get_mut(i)) {
            *last = b'0' + n as u8;
        }
    }
}

/// `v` as `format!("{v:.N}")` writes it, `N` = `decimals` (at most 3): the exact value
/// rounded half to even, a sign on every negative value (`-0.000`), `NaN`, `inf`. An
/// `f32` times 10^3 is exact in an `f64` (24 + 10 bits of 53), so one rounding gives the
/// same digits.
pub(crate) fn fixed(out: &mut Vec<u8>, v: f32, decimals: u32) {
    let decimals = decimals.min(3);
    let scale = [1.0, 10.0, 100.0, 1000.0][decimals as usize];
    let scaled = (f64::from(v) * scale).abs().round_ties_even();
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
