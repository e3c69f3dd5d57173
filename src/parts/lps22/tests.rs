//! Unit tests of the parent module.

use super::*;

#[test]
fn output_scaling() {
    // HB Table 3 / HH Table 2: 4096 LSB/hPa, 100 LSB/degC, two's complement.
    // 0x3F8000 = 4 161 536 LSB = 1016 hPa; 0x04D2 = 1234 = 12.34 degC (invented
    // values, exact in the part's units).
    let r = convert(&[0x00, 0x80, 0x3F, 0xD2, 0x04]);
    assert_eq!(r.pressure_pa, 101_600.0);
    assert_eq!(r.die_temperature_c, 12.34);
    assert_eq!(r.humidity_pct, None);
    // sign extension of both words: 0xFFF000 = -4096 LSB = -1 hPa; 0xFC18 = -10 degC
    let r = convert(&[0x00, 0xF0, 0xFF, 0x18, 0xFC]);
    assert_eq!(r.pressure_pa, -100.0);
    assert_eq!(r.die_temperature_c, -10.0);
    // one LSB and the extremes of the 24-bit word
    assert_eq!(convert(&[0x01, 0, 0, 0, 0]).pressure_pa, 100.0 / 4096.0);
    assert_eq!(
        convert(&[0xFF, 0xFF, 0x7F, 0, 0]).pressure_pa,
        8_388_607.0 * 25.0 / 1024.0
    );
    assert_eq!(
        convert(&[0x00, 0x00, 0x80, 0, 0]).pressure_pa,
        -8_388_608.0 * 25.0 / 1024.0
    );
}

#[test]
fn register_values_of_settings() {
    // CTRL_REG1 = ODR[6:4] EN_LPFP[3] LPFP_CFG[2] BDU[1]
    let c = Lps22Config {
        rate: OutputRate::Hz75,
        low_pass: LowPass::OdrOver20,
        ..Lps22Config::DEFAULT
    };
    assert_eq!(c.ctrl_reg1(), 0b0101_1110);
    assert_eq!(Lps22Config::DEFAULT.ctrl_reg1(), 0b0000_0010);
    // CTRL_REG2 = IF_ADD_INC[4], HH LOW_NOISE_EN[1]
    assert_eq!(Lps22Config::DEFAULT.ctrl_reg2(Variant::Hh), 0x12);
    assert_eq!(Lps22Config::DEFAULT.ctrl_reg2(Variant::Hb), 0x10);
    // RES_CONF keeps the reserved bit 1
    assert_eq!(res_conf(0b10, true), 0b11);
    assert_eq!(res_conf(0b11, false), 0b10);
    assert!(data_ready(0b0011) && data_ready(0b11_0011));
    assert!(!data_ready(0b01) && !data_ready(0b10));
}

#[test]
fn settings_each_variant_has() {
    let fast = |rate, power| Lps22Config {
        rate,
        power,
        low_pass: LowPass::Off,
    };
    assert!(!fast(OutputRate::Hz100, PowerMode::LowCurrent).allowed(Variant::Hb));
    assert!(fast(OutputRate::Hz75, PowerMode::LowCurrent).allowed(Variant::Hb));
    assert!(fast(OutputRate::Hz200, PowerMode::LowCurrent).allowed(Variant::Hh));
    assert!(!fast(OutputRate::Hz200, PowerMode::LowNoise).allowed(Variant::Hh));
    assert!(fast(OutputRate::Hz75, PowerMode::LowNoise).allowed(Variant::Hh));
}

#[test]
fn descriptions() {
    let d = describe(Variant::Hh, &Lps22Config::DEFAULT);
    assert_eq!(
        (d.name, d.noise_rms_pa, d.conversion_time_us),
        ("LPS22HH", Some(0.65), 13_334)
    );
    assert_eq!(
        (d.pressure_min_pa, d.pressure_max_pa),
        (26_000.0, 126_000.0)
    );
    let low_current = Lps22Config {
        power: PowerMode::LowCurrent,
        ..Lps22Config::DEFAULT
    };
    let d = describe(Variant::Hh, &low_current);
    assert_eq!((d.noise_rms_pa, d.conversion_time_us), (None, 5_000));
    let d = describe(
        Variant::Hb,
        &Lps22Config {
            rate: OutputRate::Hz10,
            ..Lps22Config::DEFAULT
        },
    );
    assert_eq!(
        (d.name, d.conversion_time_us, d.has_humidity),
        ("LPS22HB", 100_000, false)
    );
    assert_eq!(d.resolution_pa * 4096.0, 100.0);
}
