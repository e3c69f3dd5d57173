//! isohypse on an nRF52840 board with the embassy executor.
//!
//! Once a second: starts a forced conversion of a BME280 on TWIM0 (SDA P0.26, SCL P0.27,
//! the I2C pins of the nRF52840-DK's Arduino header; address 0x76, SDO low) through the
//! library's async driver (`isohypse::parts::asynch::Bme280Async`), awaits the part's
//! longest conversion time on the embassy timer, fetches the reading, passes it to a
//! `Walk` and logs the walk's output with defmt (over RTT).
//!
//! The die temperature of the part is not the air's, so the sample carries the pressure
//! and the humidity only (the `Walk` assumes its standard column temperature).

#![no_std]
#![no_main]
#![deny(unsafe_code)]

use defmt::{info, warn};
use embassy_executor::Spawner;
use embassy_nrf::twim::{self, Twim};
use embassy_nrf::{bind_interrupts, peripherals};
use embassy_time::{Duration, Instant as Clock, Ticker, Timer};
use isohypse::parts::PartReading;
use isohypse::parts::asynch::Bme280Async;
use isohypse::parts::bme280::{self, Bme280Config};
use isohypse::time::Instant;
use isohypse::uses::{Sample, Walk, WalkSettings};
use {defmt_rtt as _, panic_probe as _};

bind_interrupts!(struct Irqs {
    TWISPI0 => twim::InterruptHandler<peripherals::TWISPI0>;
});

/// The part's setting: temperature x1, pressure x4, humidity x1, no filter.
const PART_CONFIG: Bme280Config = Bme280Config::DEFAULT;

/// The walk's settings, in flash: the preset with the BME280's pressure range and its
/// noise at this setting.
static SETTINGS: WalkSettings = WalkSettings::DEFAULT.with_part(&bme280::describe(&PART_CONFIG));

/// One sample a second.
const PERIOD: Duration = Duration::from_secs(1);

type Part<'d> = Bme280Async<Twim<'d>>;

#[embassy_executor::main]
async fn main(_spawner: Spawner) {
    let p = embassy_nrf::init(Default::default());
    // TWIM copies data that is not in RAM through this buffer; the driver's writes are
    // at most two bytes.
    let mut tx_buffer = [0_u8; 8];
    // 100 kHz; the nRF's internal pull-ups on, for a part without its own (breakout
    // boards usually have them).
    let mut config = twim::Config::default();
    config.sda_pullup = true;
    config.scl_pullup = true;
    let bus = Twim::new(p.TWISPI0, Irqs, p.P0_26, p.P0_27, config, &mut tx_buffer);
    let mut part = Bme280Async::new(bus, bme280::ADDRESS_SDO_LOW);
    let mut walk = match Walk::new(&SETTINGS) {
        Ok(walk) => walk,
        Err(e) => {
            warn!("walk settings refused: {}", e);
            return;
        }
    };
    set_up(&mut part).await;

    let mut ticker = Ticker::every(PERIOD);
    loop {
        ticker.next().await;
        let Some(reading) = read(&mut part).await else {
            continue;
        };
        let mut sample = Sample::pressure(now(), reading.pressure_pa);
        sample.humidity_pct = reading.humidity_pct;
        let out = walk.process(&sample);
        info!(
            "p {} Pa: height {} m, speed {} m/s, sigma {} m, {}",
            reading.pressure_pa, out.altitude_m, out.vertical_speed_mps, out.altitude_sigma_m, out
        );
    }
}

/// Probes and configures the part, once a second until both succeed.
async fn set_up(part: &mut Part<'_>) {
    loop {
        match part.probe().await {
            Ok(()) => match part.configure(PART_CONFIG).await {
                Ok(()) => {
                    info!("BME280 ready: {}", part.description());
                    return;
                }
                Err(e) => warn!("BME280 configure: {}", e),
            },
            Err(e) => warn!("BME280 probe: {}", e),
        }
        Timer::after(PERIOD).await;
    }
}

/// One forced conversion: start, wait the longest conversion time, fetch (polling each
/// millisecond should the part still be busy). `None` after a bus or part error, which
/// is logged.
async fn read(part: &mut Part<'_>) -> Option<PartReading> {
    if let Err(e) = part.start().await {
        warn!("BME280 start: {}", e);
        return None;
    }
    let wait_us = bme280::describe(&PART_CONFIG).conversion_time_us;
    Timer::after_micros(u64::from(wait_us)).await;
    for _ in 0..100 {
        match part.fetch().await {
            Ok(Some(reading)) => return Some(reading),
            Ok(None) => Timer::after_millis(1).await,
            Err(e) => {
                warn!("BME280 fetch: {}", e);
                return None;
            }
        }
    }
    warn!("BME280: no reading 100 ms after the longest conversion time");
    None
}

/// The embassy clock as the library's time stamp (microseconds since start-up).
fn now() -> Instant {
    Instant::from_micros(Clock::now().as_micros())
}
