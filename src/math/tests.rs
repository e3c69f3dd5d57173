//! Unit tests of the parent module.

use super::*;

#[test]
fn small_ln_matches_f64() {
    // Reference: Rust's f64 `ln` of the same f32 value (the platform's C maths
    // library, within an ulp of f64; far finer than the f32 steps checked here).
    // every 1/4096 of the mantissa range, for exponents 2^-40 .. 2^40
    let mut worst = 0.0f64;
    for e in -40..=40 {
        for k in 0..4096 {
            let x = (1.0 + k as f32 / 4096.0) * 2.0f32.powi(e);
            let got = small_ln(x) as f64;
            let exact = (x as f64).ln();
            let ulp = (exact.abs().max(1e-30) as f32).to_bits();
            let step = (f32::from_bits(ulp + 1) - f32::from_bits(ulp)) as f64;
            worst = worst.max((got - exact).abs() / step.max(f64::from(f32::MIN_POSITIVE)));
            assert!(
                (got - exact).abs() <= 4.0 * step.max(1.2e-7 * 1e-3),
                "ln({x}): {got} vs {exact}"
            );
        }
    }
    assert!(worst <= 4.0);
}

#[test]
fn at_most_and_at_least_are_min_and_max() {
    // Reference: core's `f32::min` / `f32::max` (IEEE 754 minNum / maxNum on NaN).
    let values = [
        f32::NAN,
        f32::NEG_INFINITY,
        -3.0,
        -0.0,
        0.0,
        1.0e-40,
        2.5,
        1.0e30,
        f32::INFINITY,
    ];
    for x in values {
        for bound in values.iter().copied().filter(|b| !b.is_nan()) {
            // zeros of either sign compare equal; f32::min may return either one
            assert!(at_most(x, bound) == x.min(bound), "{x} {bound}");
            assert!(at_least(x, bound) == x.max(bound), "{x} {bound}");
        }
    }
}

#[test]
fn large_exp_m1_matches_f64() {
    // Reference: Rust's f64 `exp_m1` of the same f32 value (platform C maths library).
    let mut worst = 0.0f64;
    let mut y = -20.0f32;
    while y <= 20.0 {
        let got = f64::from(small_exp_m1(y));
        let exact = f64::from(y).exp_m1();
        let rel = (got - exact).abs() / exact.abs();
        worst = worst.max(rel);
        assert!(rel <= 1.0e-6, "{y}: {got} vs {exact}");
        y += 0.003_1;
    }
    assert!(worst > 0.0);
    assert_eq!(small_exp_m1(-200.0), -1.0);
    assert!(small_exp_m1(100.0) > 1.0e38);
}

#[test]
fn small_exp_m1_matches_f64() {
    // Reference: Rust's f64 `exp_m1` of the same f32 value (platform C maths library).
    let mut y = -0.6f32;
    while y <= 0.6 {
        let got = small_exp_m1(y) as f64;
        let exact = (y as f64).exp_m1();
        assert!(
            (got - exact).abs() <= 3.0e-7 * exact.abs() + 1e-12,
            "{y}: {got} vs {exact}"
        );
        y += 0.0007;
    }
}

#[test]
fn sigma_from_variance_matches_f64() {
    // Source of truth: f64 sqrt of the same f32 value (IEEE 754 correctly rounded).
    let mut worst = 0.0f64;
    let mut x = 1.0e-30f32;
    while x < 1.0e30 {
        let got = f64::from(sigma_from_variance(x));
        let exact = f64::from(x).sqrt();
        worst = worst.max((got - exact).abs() / exact);
        x *= 1.0137;
    }
    // one ulp of f32 is 1.2e-7 relative at most
    assert!(worst < 1.2e-7, "worst relative error {worst:e}");
    assert_eq!(sigma_from_variance(0.0), 0.0);
    assert_eq!(sigma_from_variance(-1.0e-9), 0.0);
    assert_eq!(sigma_from_variance(f32::NAN), 0.0);
    assert_eq!(sigma_from_variance(f32::INFINITY), f32::INFINITY);
    assert_eq!(sigma_from_variance(4.0), 2.0);
}

#[test]
fn sin_and_sqrt_match_f64() {
    // Both backends: sin within 2e-7 absolute over two turns, sqrt within 2 ulp.
    // Reference: Rust's f64 `sin` and `sqrt` (sqrt correctly rounded by IEEE 754).
    let mut x = -7.0f32;
    while x < 7.0 {
        assert!((sin(x) as f64 - (x as f64).sin()).abs() < 2e-7, "sin({x})");
        x += 0.001;
    }
    for k in 1..20_000 {
        let x = k as f32 * 0.731;
        let exact = (x as f64).sqrt();
        assert!((sqrt(x) as f64 - exact).abs() / exact < 2.5e-7, "sqrt({x})");
    }
}
