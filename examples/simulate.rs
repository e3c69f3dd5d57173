//! Writes the three invented demo recordings (balloon, drone, hike) and their truth files.
//!
//! ```text
//! cargo run --example simulate                 # writes examples/data/
//! cargo run --example simulate -- --out-dir /tmp/demo
//! ```
//!
//! For each scenario `<name>.csv` (the replay tool's input format) and `<name>.truth.csv`
//! (`time_s,altitude_m,vertical_speed_mps`) are written, then the truth summary and the
//! file sizes are printed. The scenarios, their atmospheres, motions and sensor noise are
//! documented in `examples/sim/mod.rs`; fixed seeds make every run byte-identical.

#[path = "sim/mod.rs"]
mod sim;

use clap::Parser;
use std::path::PathBuf;
use std::process::ExitCode;

/// Command line of the simulator.
#[derive(Parser, Debug)]
#[command(about = "Write the invented demo recordings and their truth files")]
struct Cli {
    /// Directory for the six files (created if missing).
    #[arg(long, default_value = "examples/data")]
    out_dir: PathBuf,
}

/// The committed demo files together stay under 1 MiB.
const BUDGET_BYTES: u64 = 1 << 20;

/// Sanity checks before writing: row and truth times strictly increasing, every truth
/// time is a row time, every row carries at least one measured channel.
fn check(s: &sim::Scenario) -> std::io::Result<()> {
    let fail = |what: String| Err(std::io::Error::other(format!("{}: {what}", s.name)));
    if let Some(w) = s.rows.windows(2).find(|w| w[1].time_s <= w[0].time_s) {
        return fail(format!(
            "row time {} not after {}",
            w[1].time_s, w[0].time_s
        ));
    }
    if let Some(w) = s.truth.windows(2).find(|w| w[1].time_s <= w[0].time_s) {
        return fail(format!(
            "truth time {} not after {}",
            w[1].time_s, w[0].time_s
        ));
    }
    let times: Vec<f64> = s.rows.iter().map(|r| r.time_s).collect();
    if let Some(t) = s
        .truth
        .iter()
        .find(|t| times.binary_search_by(|x| x.total_cmp(&t.time_s)).is_err())
    {
        return fail(format!("truth time {} is not a row time", t.time_s));
    }
    if let Some(r) = s
        .rows
        .iter()
        .find(|r| r.pressure_pa.is_none() && r.accel_up_mps2.is_none())
    {
        return fail(format!(
            "row at {} s has neither pressure nor acceleration",
            r.time_s
        ));
    }
    Ok(())
}

fn fmt_opt(v: Option<f64>) -> String {
    v.map_or("-".to_string(), |x| format!("{x:.2} s"))
}

fn run(cli: &Cli) -> std::io::Result<u64> {
    std::fs::create_dir_all(&cli.out_dir)?;
    let mut total = 0;
    for scenario in [sim::balloon(), sim::drone(), sim::hike()] {
        check(&scenario)?;
        let input = cli.out_dir.join(format!("{}.csv", scenario.name));
        let truth = cli.out_dir.join(format!("{}.truth.csv", scenario.name));
        sim::write_csv(&scenario, &input)?;
        sim::write_truth_csv(&scenario, &truth)?;
        let s = &scenario.summary;
        println!(
            "{}: lat {} deg, start {:.2} m, {} rows, {} truth rows, duration {:.1} s",
            scenario.name,
            scenario.latitude_deg,
            scenario.start_altitude_m,
            scenario.rows.len(),
            scenario.truth.len(),
            scenario.rows.last().map_or(0.0, |r| r.time_s),
        );
        println!(
            "  top {:.3} m at {:.2} s, ascent {:.3} m, descent {:.3} m, burst {}, landing {}",
            s.top_altitude_m,
            s.top_time_s,
            s.total_ascent_m,
            s.total_descent_m,
            fmt_opt(s.burst_time_s),
            fmt_opt(s.landing_time_s)
        );
        for path in [&input, &truth] {
            let len = std::fs::metadata(path)?.len();
            total += len;
            println!("  {:>9} bytes  {}", len, path.display());
        }
    }
    println!("total {} bytes ({:.1} KiB)", total, total as f64 / 1024.0);
    if total >= BUDGET_BYTES {
        return Err(std::io::Error::other(format!(
            "the six files take {total} bytes, over the {BUDGET_BYTES}-byte budget"
        )));
    }
    Ok(total)
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(&cli) {
        Ok(_) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("simulate: {e}");
            ExitCode::FAILURE
        }
    }
}
