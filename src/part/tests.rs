//! Unit tests of the parent module.

use super::*;

#[test]
fn noise_falls_back_to_the_quantisation_of_one_step() {
    let mut part = PartDescription {
        name: "test",
        pressure_min_pa: 30_000.0,
        pressure_max_pa: 110_000.0,
        resolution_pa: 1.2,
        noise_rms_pa: Some(0.75),
        conversion_time_us: 10_000,
        has_humidity: false,
    };
    assert_eq!(part.noise_pa(), 0.75);
    part.noise_rms_pa = None;
    // a uniform error over a step q has the standard deviation q / sqrt(12)
    assert!((part.noise_pa() - 1.2 / 12f32.sqrt()).abs() < 1e-6);
}
