//! Unit tests of the parent module.

use super::*;

#[test]
fn differences_are_exact_integers() {
    let a = Instant::from_millis(4_294_967_295);
    let b = Instant::from_micros(4_294_967_295_020);
    assert_eq!(b.checked_duration_since(a), Some(Duration::from_micros(20)));
    assert_eq!(a.checked_duration_since(b), None);
    assert_eq!(Duration::from_millis(20).as_secs_f32(), 0.02);
    assert_eq!(Duration::from_secs(5_000).as_secs_f32(), 5_000.0);
    assert_eq!(
        Duration::from_secs_f32(0.02),
        Some(Duration::from_micros(20_000))
    );
    assert_eq!(Duration::from_secs_f32(-1.0), None);
    assert_eq!(Duration::from_secs_f32(f32::NAN), None);
}

#[test]
fn wrapping_counter_keeps_counting() {
    let mut clock = WrappingTicks::<1_000>::new();
    let mut last = clock.instant(u32::MAX - 100);
    for raw in [u32::MAX - 50, u32::MAX, 3, 1_000, u32::MAX - 1, 5] {
        let now = clock.instant(raw);
        assert!(now > last, "{raw}");
        last = now;
    }
    // two wraps: 2 * 2^32 ms + 5 ms
    assert_eq!(last.as_millis(), 2 * (1u64 << 32) + 5);
    let mut fast = WrappingTicks::<1_000_000>::new();
    assert_eq!(fast.instant(7).as_micros(), 7);
    let mut odd = WrappingTicks::<32_768>::new();
    assert_eq!(odd.instant(32_768 * 3 + 16_384).as_micros(), 3_500_000);
}
