//! Unit tests of the parent module.

use super::*;

fn feed(t: &mut AscentTotals, hs: &[f32]) {
    for &h in hs {
        t.update(Height::from_meters(h).unwrap());
    }
}

/// Deterministic xorshift32 (Marsaglia 2003, "Xorshift RNGs", J. Stat. Softw. 8(14)).
fn xorshift(state: &mut u32) -> f32 {
    *state ^= *state << 13;
    *state ^= *state >> 17;
    *state ^= *state << 5;
    (*state as f32) / (u32::MAX as f32)
}

#[test]
fn rejects_bad_band() {
    assert_eq!(AscentTotals::new(f32::NAN), Err(Error::NotFinite));
    assert_eq!(AscentTotals::new(0.0), Err(Error::InvalidSetting));
    assert_eq!(AscentTotals::new(-1.0), Err(Error::InvalidSetting));
    assert_eq!(AscentTotals::new(1000.0), Err(Error::InvalidSetting));
}

#[test]
fn oscillations_below_band_add_nothing() {
    let mut t = AscentTotals::new(3.0).unwrap();
    let mut s = 7u32;
    for _ in 0..100_000 {
        // +-1.4 m uniform: peak to peak 2.8 m < 3 m band.
        feed(&mut t, &[500.0 + 2.8 * (xorshift(&mut s) - 0.5)]);
    }
    assert_eq!(t.ascent_cm(), 0);
    assert_eq!(t.descent_cm(), 0);
}

#[test]
fn real_climb_counted_fully() {
    let mut t = AscentTotals::new(3.0).unwrap();
    // 0 -> 250 m in 1 cm steps, then back to 10 m.
    for i in 0..=25_000 {
        feed(&mut t, &[i as f32 / 100.0]);
    }
    for i in (1_000..25_000).rev() {
        feed(&mut t, &[i as f32 / 100.0]);
    }
    assert_eq!(t.ascent_cm(), 25_000);
    assert_eq!(t.descent_cm(), 24_000);
    // A move of 2.9 m back up is not counted until it exceeds the band.
    feed(&mut t, &[12.9]);
    assert_eq!(t.ascent_cm(), 25_000);
    feed(&mut t, &[13.1]);
    assert_eq!(t.ascent_cm(), 25_000 + 310);
}

#[test]
fn totals_never_exceed_total_variation() {
    // Random walks with steps of all sizes: counted ascent + descent <= total
    // variation of the centimetre-rounded input (exact integer comparison).
    for seed in 1..20u32 {
        let mut s = seed.wrapping_mul(2_654_435_761);
        let band = 0.5 + 5.0 * xorshift(&mut s);
        let mut t = AscentTotals::new(band).unwrap();
        let mut h = 1000.0f32;
        let mut prev: Option<i64> = None;
        let mut tv: i64 = 0;
        for _ in 0..20_000 {
            h += 8.0 * (xorshift(&mut s) - 0.5) * xorshift(&mut s);
            let cm = i64::from(to_cm(h));
            if let Some(p) = prev {
                tv += (cm - p).abs();
            }
            prev = Some(cm);
            t.update(Height::from_meters(h).unwrap());
        }
        let counted = i64::from(t.ascent_cm()) + i64::from(t.descent_cm());
        assert!(counted <= tv, "seed {seed}: {counted} > {tv}");
    }
}

#[test]
fn bounded_noise_on_a_climb_costs_at_most_the_band() {
    // Truth: 0 -> 400 m -> 0 m; noise uniform within +-e, e < band / 4.
    // Counted ascent <= true ascent + band, counted descent <= true descent + band.
    let band = 3.0;
    for seed in 1..10u32 {
        let mut s = seed.wrapping_mul(747_796_405);
        let mut t = AscentTotals::new(band).unwrap();
        for i in 0..=8_000 {
            let truth = if i <= 4_000 {
                i as f32 * 0.1
            } else {
                (8_000 - i) as f32 * 0.1
            };
            let noise = 1.4 * (xorshift(&mut s) - 0.5);
            t.update(Height::from_meters(truth + noise).unwrap());
        }
        assert!(t.ascent_m() <= 400.0 + band, "{}", t.ascent_m());
        assert!(t.descent_m() <= 400.0 + band, "{}", t.descent_m());
        assert!(t.ascent_m() >= 400.0 - band, "{}", t.ascent_m());
    }
}

#[test]
fn first_move_counted_from_farther_extreme() {
    let mut t = AscentTotals::new(3.0).unwrap();
    feed(&mut t, &[100.0, 98.0, 99.0, 105.0]);
    assert_eq!(t.ascent_cm(), 700);
    assert_eq!(t.descent_cm(), 0);
    assert_eq!(t.trend(), Trend::Rising);
}

#[test]
fn no_drift_over_a_month_of_small_steps() {
    // 5 million samples (58 days at 1 Hz) of 1 cm steps up and down 10 m at 1.5 km:
    // the totals are exact to the centimetre.
    let mut t = AscentTotals::new(3.0).unwrap();
    let mut h = 0i32;
    let mut up = true;
    let mut expected_up: u32 = 0;
    t.update(Height::from_meters(1_500.0).unwrap());
    for _ in 0..5_000_000 {
        if up {
            h += 1;
            expected_up += 1;
            if h == 1_000 {
                up = false;
            }
        } else {
            h -= 1;
            if h == 0 {
                up = true;
            }
        }
        t.update(Height::from_meters(1_500.0 + h as f32 / 100.0).unwrap());
    }
    assert_eq!(t.ascent_cm(), expected_up);
}
