//! Unit tests of the parent module.

use super::*;

#[test]
fn exact_on_constant_input() {
    // A mean of identical values is that value (definition of the mean).
    for c in [0.1f32, 101_325.0, -7.3e-3, 8848.86] {
        let mut m = MovingAverage::<7>::new();
        for _ in 0..100_000 {
            assert_eq!(m.push(c).unwrap(), c);
        }
    }
}

#[test]
fn no_drift_over_a_million_samples() {
    // Reference: the window mean computed from scratch in f64 (definition).
    const N: usize = 16;
    let mut m = MovingAverage::<N>::new();
    let mut ring = [0.0f64; N];
    let mut s: u32 = 0x9e37_79b9;
    let mut worst = 0.0f64;
    for i in 0..1_000_000usize {
        s ^= s << 13;
        s ^= s >> 17;
        s ^= s << 5;
        // Heights around 500 m with +-1 m of noise and a slow climb.
        let x = 500.0 + (s % 20_001) as f32 / 10_000.0 - 1.0 + i as f32 * 1.0e-4;
        ring[i % N] = x as f64;
        let y = m.push(x).unwrap() as f64;
        let n = (i + 1).min(N);
        let r: f64 = ring[..n].iter().sum::<f64>() / n as f64;
        worst = worst.max((y - r).abs());
    }
    // f32 resolution near 600 m is 6.1e-5 m; allow four units of it.
    assert!(worst < 2.5e-4, "worst deviation {worst} m");
}

#[test]
fn partial_window_and_wrap() {
    // Means worked by hand (definition of the mean of the last 3 samples).
    let mut m = MovingAverage::<3>::new();
    assert_eq!(m.value(), None);
    assert_eq!(m.push(3.0).unwrap(), 3.0);
    assert_eq!(m.push(6.0).unwrap(), 4.5);
    assert_eq!(m.push(9.0).unwrap(), 6.0);
    assert_eq!(m.push(12.0).unwrap(), 9.0);
    assert!(m.is_full());
}

#[test]
fn rejects_non_finite_and_keeps_state() {
    let mut m = MovingAverage::<4>::new();
    m.push(1.0).unwrap();
    m.push(2.0).unwrap();
    let before = m;
    assert_eq!(m.push(f32::NAN), Err(Error::NotFinite));
    assert_eq!(m.push(f32::NEG_INFINITY), Err(Error::NotFinite));
    assert_eq!(m, before);
    m.clear();
    assert!(m.is_empty());
}
