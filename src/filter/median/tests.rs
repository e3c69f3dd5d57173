//! Unit tests of the parent module.

use super::*;

#[test]
fn removes_single_spike() {
    // Edge-preserving, spike-removing property of the running median (common
    // practice).
    let mut m = Median::<5>::new();
    let input = [
        1.0, 1.0, 1.0, 1.0, 1.0, 40.0, 1.0, 1.0, 1.0, -40.0, 1.0, 1.0,
    ];
    for x in input {
        assert_eq!(m.push(x).unwrap(), 1.0);
    }
}

#[test]
fn two_adjacent_spikes_removed_by_window_5() {
    let mut m = Median::<5>::new();
    for x in [2.0, 2.0, 2.0, 9.0, 9.0, 2.0, 2.0, 2.0] {
        assert_eq!(m.push(x).unwrap(), 2.0);
    }
}

#[test]
fn step_passes_delayed_by_half_window() {
    let mut m = Median::<5>::new();
    let mut out = [0.0f32; 12];
    for (i, o) in out.iter_mut().enumerate() {
        *o = m.push(if i < 6 { 0.0 } else { 3.0 }).unwrap();
    }
    // Step at sample 6 appears at sample 6 + (5 - 1) / 2 = 8.
    assert_eq!(&out[..8], &[0.0; 8]);
    assert_eq!(&out[8..], &[3.0; 4]);
}

#[test]
fn matches_sorting_reference_on_varied_input() {
    // Reference: sort the last N values (definition of the median).
    let mut m = Median::<4>::new();
    let mut hist = [0.0f32; 500];
    let mut s: u32 = 12345;
    for i in 0..500 {
        s ^= s << 13;
        s ^= s >> 17;
        s ^= s << 5;
        let x = (s % 1000) as f32 / 10.0 - 50.0;
        hist[i] = x;
        let y = m.push(x).unwrap();
        let start = (i + 1).saturating_sub(4);
        let mut w = [0.0f32; 4];
        let n = i + 1 - start;
        w[..n].copy_from_slice(&hist[start..=i]);
        let w = &mut w[..n];
        w.sort_unstable_by(|a, b| a.partial_cmp(b).unwrap());
        let r = if n % 2 == 1 {
            w[n / 2]
        } else {
            w[n / 2 - 1] + 0.5 * (w[n / 2] - w[n / 2 - 1])
        };
        assert_eq!(y, r);
    }
}

#[test]
fn rejects_non_finite_and_keeps_state() {
    let mut m = Median::<3>::new();
    m.push(1.0).unwrap();
    m.push(2.0).unwrap();
    let before = m;
    assert_eq!(m.push(f32::NAN), Err(Error::NotFinite));
    assert_eq!(m.push(f32::INFINITY), Err(Error::NotFinite));
    assert_eq!(m, before);
}

#[test]
fn empty_and_clear() {
    let mut m = Median::<3>::default();
    assert_eq!(m.value(), None);
    assert!(m.is_empty());
    m.push(5.0).unwrap();
    assert_eq!(m.value(), Some(5.0));
    m.clear();
    assert!(m.is_empty());
}

/// The median of the last `N` values by sorting a copy of them (the definition).
fn brute_median<const N: usize>(history: &[f32]) -> f32 {
    let start = history.len().saturating_sub(N);
    let mut w: heapless::Vec<f32, N> = heapless::Vec::new();
    for &x in &history[start..] {
        w.push(x).unwrap();
    }
    w.sort_unstable_by(|a, b| a.partial_cmp(b).unwrap());
    let n = w.len();
    if n % 2 == 1 {
        w[n / 2]
    } else {
        w[n / 2 - 1] + 0.5 * (w[n / 2] - w[n / 2 - 1])
    }
}

#[test]
fn equals_the_sorted_window_with_repeats() {
    // small integers so that repeated values (the removal's search) are frequent
    let mut x: u32 = 12345;
    let mut history: heapless::Vec<f32, 512> = heapless::Vec::new();
    let mut m5 = Median::<5>::new();
    let mut m4 = Median::<4>::new();
    let mut m1 = Median::<1>::new();
    for _ in 0..500 {
        x = x.wrapping_mul(1_103_515_245).wrapping_add(12_345); // LCG (ANSI C example)
        let v = ((x >> 16) % 7) as f32 - 3.0;
        history.push(v).unwrap();
        assert_eq!(m5.push(v).unwrap(), brute_median::<5>(&history));
        assert_eq!(m4.push(v).unwrap(), brute_median::<4>(&history));
        assert_eq!(m1.push(v).unwrap(), v);
    }
}

#[test]
fn cleared_filter_equals_a_new_one_with_the_same_samples() {
    let mut used = Median::<5>::new();
    for x in [40.0, 41.0, 39.0, 90.0, 42.0, 43.0, 38.0] {
        used.push(x).unwrap();
    }
    used.clear();
    assert!(used.is_empty());
    assert_eq!(used.value(), None);
    assert_eq!(used, Median::<5>::new());
    let mut fresh = Median::<5>::new();
    for x in [7.0, 5.0, 6.0] {
        assert_eq!(used.push(x).unwrap(), fresh.push(x).unwrap());
    }
    assert_eq!(used, fresh);
    // the same samples in another order are another state
    let mut other = Median::<5>::new();
    for x in [5.0, 7.0, 6.0] {
        other.push(x).unwrap();
    }
    assert_ne!(used, other);
    // and after the ring wraps, the stale storage never shows
    for x in [1.0, 2.0, 3.0, 4.0, 5.0, 6.0] {
        assert_eq!(used.push(x).unwrap(), fresh.push(x).unwrap());
    }
    assert_eq!(used, fresh);
}
