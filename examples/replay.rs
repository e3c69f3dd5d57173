//! Replay a recorded log through the isohypse pipeline: output table, SVG plot and a
//! short summary.
//!
//! ```text
//! cargo run --release --example replay                      # the built-in demo logs
//! cargo run --release --example replay -- flight.csv --preset balloon \
//!     --latitude-deg 64.2 --start-altitude-m 310   # flight.out.csv, flight.svg, flight.summary.txt
//! ```
//!
//! The log is read, run and written row by row: memory stays a few megabytes whatever
//! its length, and the plot is reduced to what its width in pixels can show (the
//! lowest and highest value of each series in each of 2048 spans of time, so a single
//! spike stays visible). A long run shows its progress on stderr when that is a
//! terminal (not with `--quiet`).
//!
//! Input: CSV with a header row, columns by name in any order (a name given twice is
//! refused), `#` lines are comments (also indented ones), blank lines are skipped:
//! `time_s` (required, s, strictly increasing), `pressure_pa` (required column, Pa; an
//! empty cell is allowed only in a row that carries `accel_up_mps2`: an
//! accelerometer-only row between barometer samples, used by the estimator and given no
//! output row), and the optional channels:
//!
//! - `temperature_c`: AIR temperature, degC (100..400 K);
//! - `sensor_temperature_c`: the barometer's own temperature, degC (100..400 K), read
//!   and checked but never used as air temperature (a sensor warmed by its board reads
//!   warmer than the air);
//! - `humidity_pct`: relative humidity, % (0..110; above 100 is taken as 100 and flagged
//!   `humidity_clamped`: real sensors read so in cloud);
//! - `accel_up_mps2`: earth-frame vertical acceleration, gravity removed, m/s^2 (within
//!   20 g);
//! - `known_altitude_m`: an exact known elevation (summit marker, surveyed point), m
//!   (-5 km..90 km);
//! - `gnss_altitude_m`: satellite altitude, geometric above mean sea level, m (-5 km..90
//!   km), and `gnss_accuracy_m`, its 1-sigma vertical accuracy, m (above 0, at most
//!   10 km): fused with the barometric height by the balloon preset (see
//!   `isohypse::uses::GnssSettings`); the other presets read and check them only.
//!
//! One line is one row (`\n`, `\r\n` or `\r` ends it; a quoted field cannot span
//! lines), and line numbers in messages count every line of the file, comments and
//! blank ones included. Column names are matched exactly (case matters) after trimming
//! blanks; other columns are ignored. Blanks around a field are ignored; an empty cell
//! in an optional column means "no value" (not a bad row). Numbers: decimal point,
//! optional sign and exponent (`+1.01325e5`). Bytes that are not UTF-8 spoil only the
//! rows they are in (a Latin-1 comment is fine).
//!
//! A bad required value (time, pressure: missing, unparsable, `inf`, `nan` or beyond
//! its physical range) rejects the row. A bad optional value (unparsable, `inf`, `nan`
//! or out of the range above) drops that channel only: the row is kept, a warning
//! names its line and the value, and the output row's flags name the channel dropped
//! (`temperature_ignored`, `humidity_ignored`, `accel_ignored`, `fix_ignored`,
//! `sensor_temperature_ignored`, `gnss_altitude_ignored`, `gnss_accuracy_ignored`).
//!
//! Output: `time_s,pressure_pa,altitude_m,vertical_speed_mps,altitude_sigma_m,phase,
//! ascent_m,descent_m,flags`, one row per accepted barometer row. `NaN` in a numeric
//! column means "no value": the height, speed and sigma of a flagged row before the
//! first accepted sample (nothing to carry forward yet), and with `--filter off` the
//! vertical speed of a log with a single accepted row. With `--filter off` the vertical
//! speed is the height difference to the last accepted row over the time between them,
//! whatever its size; the first accepted row, which has no row before it, shows the
//! speed of the step after it (held back until that step is read: at most 4096 rows).
//!
//! Messages are bounded: a cell is echoed cut short (40 characters) with control
//! characters escaped; a line over 1 MiB is rejected without being read into memory;
//! the terminal shows the first 20 bad rows and the first 20 dropped-channel warnings,
//! the summary file the first 100 of each, each list with the count of the others.
//!
//! Exit codes: 0 success (rows may have been skipped or channels dropped: see the
//! summary, which lists them); 1 bad command line or a file that cannot be read or
//! written; 2 a bad row or a bad optional value with `--strict`; 3 no usable row at all
//! (empty file, no data row, every row bad: the error lists them; missing or repeated
//! required column).

#[path = "replay/channels.rs"]
pub(crate) mod channels;
#[path = "replay/delay.rs"]
mod delay;
#[path = "replay/engine.rs"]
pub(crate) mod engine;
#[path = "replay/envelope.rs"]
pub(crate) mod envelope;
#[path = "replay/labels.rs"]
pub(crate) mod labels;
#[path = "replay/lines.rs"]
pub(crate) mod lines;
#[path = "replay/messages.rs"]
pub(crate) mod messages;
#[path = "replay/numbers.rs"]
pub(crate) mod numbers;
#[path = "replay/palette.rs"]
pub(crate) mod palette;
#[path = "replay/plot.rs"]
pub(crate) mod plot;
#[path = "replay/profile.rs"]
pub(crate) mod profile;
#[path = "replay/progress.rs"]
pub(crate) mod progress;
#[path = "replay/row.rs"]
pub(crate) mod row;
#[path = "replay/scale.rs"]
pub(crate) mod scale;
#[path = "replay/steps.rs"]
mod steps;
#[path = "replay/story.rs"]
pub(crate) mod story;
#[path = "replay/stream.rs"]
pub(crate) mod stream;
#[path = "replay/summary.rs"]
pub(crate) mod summary;
#[path = "replay/table.rs"]
pub(crate) mod table;

use std::fs;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::{Parser, ValueEnum};

use envelope::Envelope;
use messages::Messages;
use profile::Profile;
use progress::Progress;
use row::cell;
use scale::Scale;
use table::{Table, io_failure};

pub(crate) use engine::settings_for;
#[allow(unused_imports)]
pub(crate) use engine::{Output, Settings};
// The whole-run helpers of the tests (tests/replay.rs) and the fuzz target
// (tests/fuzz): the tool itself streams.
#[allow(unused_imports)]
pub(crate) use {
    plot::write_plot,
    stream::{Replay, replay},
    table::write_output,
};

/// Replay a pressure log through the isohypse pipeline (the same per-sample pipeline
/// the firmware runs) and write the heights, an SVG plot and a summary.
#[derive(Parser, Debug)]
#[command(version, long_about = None, after_help = AFTER_HELP)]
pub(crate) struct Cli {
    /// Input CSV log. Without it the three built-in demo logs (balloon, drone, hike)
    /// are replayed and the files go to --out-dir.
    pub(crate) input: Option<PathBuf>,
    /// Output CSV (default: next to the input, its extension replaced: `x.csv` gives
    /// `x.out.csv`).
    #[arg(long, value_name = "FILE")]
    pub(crate) out: Option<PathBuf>,
    /// SVG plot of raw and filtered height, vertical speed, phases and totals
    /// (default: `x.svg` for the input `x.csv`).
    #[arg(long, value_name = "FILE.svg")]
    pub(crate) plot: Option<PathBuf>,
    /// Summary text file (default: `x.summary.txt` for the input `x.csv`; always
    /// printed too).
    #[arg(long, value_name = "FILE")]
    pub(crate) summary: Option<PathBuf>,
    /// Directory for the demo run's files (no input given).
    #[arg(long, value_name = "DIR", default_value = "target/replay")]
    pub(crate) out_dir: PathBuf,
    /// Settings preset for the kind of device. Without it the preset is inferred from
    /// the log's columns and stated in the summary: `accel_up_mps2` gives the drone,
    /// `humidity_pct` or `gnss_altitude_m` (or a --model only the balloon takes) the
    /// balloon, anything else the walk (hike).
    #[arg(long, value_enum)]
    pub(crate) preset: Option<PresetArg>,
    /// Height model: `standard` (U.S. 1976 pressure altitude plus datum), `sounding`
    /// (layer-by-layer hypsometric integration with each row's temperature and
    /// humidity), `mean` (two-point hypsometric method from the first row: the column
    /// at the mean of the first and the current temperature) or `offset` (standard
    /// atmosphere warmer or colder by --temperature-offset-k). Default: the preset's
    /// (balloon: sounding; drone, hike: standard).
    #[arg(long, value_enum)]
    pub(crate) model: Option<ModelArg>,
    /// Temperature offset from standard for `--model offset`, K (positive: warmer).
    #[arg(
        long,
        value_name = "K",
        allow_hyphen_values = true,
        default_value_t = 0.0,
        value_parser = finite_number
    )]
    pub(crate) temperature_offset_k: f32,
    /// `off`: pointwise conversion: no smoothing, no outlier rejection, no weather hold
    /// (hike totals then count every move beyond a 3 m band); `on`: the preset's
    /// estimator and trackers.
    #[arg(long, value_enum, default_value_t = FilterArg::On)]
    pub(crate) filter: FilterArg,
    /// Height of the first row, or of the ground reference averaged over the rows at
    /// rest before motion starts; sets the datum. Without it: the standard pressure
    /// altitude (drone preset with the filter on: 0, height above the take-off point).
    #[arg(long, value_name = "H", allow_hyphen_values = true, value_parser = finite_number)]
    pub(crate) start_altitude_m: Option<f32>,
    /// Latitude for gravity (sounding model, geometric heights). Without it: standard
    /// gravity 9.80665 m/s^2.
    #[arg(long, value_name = "D", allow_hyphen_values = true, value_parser = finite_number)]
    pub(crate) latitude_deg: Option<f32>,
    /// Stop at the first bad row or bad optional value with exit code 2 instead of
    /// skipping the row or dropping the channel.
    #[arg(long)]
    pub(crate) strict: bool,
    /// Print nothing but errors (no messages, summary or progress).
    #[arg(long)]
    pub(crate) quiet: bool,
}

const AFTER_HELP: &str = "\
Input columns: time_s (required, s), pressure_pa (required, Pa; empty only in an
accelerometer-only row), and optional: temperature_c (AIR temperature, degC),
sensor_temperature_c (the barometer's own temperature, degC: checked, never used as
air temperature), humidity_pct (0..110; above 100 is taken as 100, flagged
humidity_clamped), accel_up_mps2 (vertical, gravity removed, within 20 g),
known_altitude_m (an exact known elevation), gnss_altitude_m and gnss_accuracy_m
(satellite altitude above mean sea level and its 1-sigma, m: fused by the balloon
preset, read and checked by the others).
Names match exactly (case matters); other columns are ignored. Lines starting with #
(after any blanks) are comments; blank lines are skipped. Blanks around fields are
ignored; an empty optional cell means no value. Numbers like 95000, +1.01325e5.
Output columns: time_s,pressure_pa,altitude_m,vertical_speed_mps,altitude_sigma_m,phase,
ascent_m,descent_m,flags. NaN means no value: a flagged row before the first accepted
one has no height, speed or sigma. With --filter off the speed is the difference to the
previous accepted row (the first accepted row shows the step after it).
A bad row (wrong field count; time or pressure missing, unparsable, inf, nan or
non-physical; time not after the previous row) is reported with its line number and
skipped. A bad optional value (unparsable, inf, nan, out of range: temperatures
outside 100..400 K, humidity outside 0..110 %) drops that channel only: the row is
kept, a warning names its line, and the row's flags name the channel
(temperature_ignored, humidity_ignored, accel_ignored, fix_ignored,
sensor_temperature_ignored, gnss_altitude_ignored, gnss_accuracy_ignored). With
--strict either stops the run (exit 2). Line numbers count every line of the file. A
cell is echoed cut short, control characters escaped; a line over 1 MiB is a bad
row. The first 20 bad rows and 20 warnings are printed, the summary file lists the
first 100 of each, each with the count of the others. Output files default to the input's name: x.csv gives x.out.csv, x.svg
and x.summary.txt. Progress is shown on stderr for long runs when it is a terminal. Exit codes: 0 ok, 1 usage or I/O error,
2 bad row or value with --strict, 3 no usable row (the error lists the bad rows) or a missing
or repeated column name.
Not certified for aviation, navigation or life-safety use (see SAFETY.md).";

/// A numeric option value: a finite number that fits an `f32` (without this check
/// `1e40` would become infinity and be reported as `inf`, not as what was typed).
pub(crate) fn finite_number(text: &str) -> Result<f32, String> {
    // parsed and checked as a cell is, then narrowed
    let v = cell(Some(text), "the value")?.ok_or_else(|| "no value given".to_string())?;
    let f = v as f32;
    if f.is_finite() {
        Ok(f)
    } else {
        Err(format!(
            "'{text}' is not a finite number within +-3.4e38 (NaN and infinities are refused)"
        ))
    }
}

#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum PresetArg {
    Balloon,
    Drone,
    Hike,
}

#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum ModelArg {
    /// U.S. 1976 pressure altitude plus the datum.
    Standard,
    /// Layer-by-layer integration with each row's temperature and humidity.
    Sounding,
    /// Two-point hypsometric method: the column at the mean of the first row's and the
    /// current row's temperature.
    Mean,
    /// The standard atmosphere offset by --temperature-offset-k (a warm or cold day).
    Offset,
}

#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum FilterArg {
    On,
    Off,
}

/// Why a run failed.
#[derive(Debug)]
pub(crate) enum Failure {
    Usage(String),
    Io(String),
    StrictRow(String),
    NoRows(String),
}

impl Failure {
    pub(crate) fn code(&self) -> u8 {
        match self {
            Failure::Usage(_) | Failure::Io(_) => 1,
            Failure::StrictRow(_) => 2,
            Failure::NoRows(_) => 3,
        }
    }
    pub(crate) fn message(&self) -> &str {
        match self {
            Failure::Usage(m) | Failure::Io(m) | Failure::StrictRow(m) | Failure::NoRows(m) => m,
        }
    }
}

/// Where one run writes: the output table, the plot and the summary.
#[derive(Debug, Clone)]
pub(crate) struct Files {
    pub(crate) out: PathBuf,
    pub(crate) plot: PathBuf,
    pub(crate) summary: PathBuf,
}

impl Files {
    /// The files of the log `input`: the options given, else beside the input with its
    /// extension replaced (`x.csv` -> `x.out.csv`, `x.svg`, `x.summary.txt`). None may
    /// be the input itself.
    pub(crate) fn for_input(input: &Path, cli: &Cli) -> Result<Self, Failure> {
        let files = Self {
            out: cli
                .out
                .clone()
                .unwrap_or_else(|| input.with_extension("out.csv")),
            plot: cli
                .plot
                .clone()
                .unwrap_or_else(|| input.with_extension("svg")),
            summary: cli
                .summary
                .clone()
                .unwrap_or_else(|| input.with_extension("summary.txt")),
        };
        let same = |p: &Path| {
            p == input
                || fs::canonicalize(p)
                    .ok()
                    .is_some_and(|c| fs::canonicalize(input).ok() == Some(c))
        };
        for (option, path) in [
            ("--out", &files.out),
            ("--plot", &files.plot),
            ("--summary", &files.summary),
        ] {
            if same(path) {
                return Err(Failure::Usage(format!(
                    "{}: the {option} file would overwrite the input log; name another with {option}",
                    path.display()
                )));
            }
        }
        Ok(files)
    }
}

/// Run the log `text` and write its files; returns the summary text.
pub(crate) fn run_one(
    name: &str,
    text: &str,
    cli: &Cli,
    out: &Path,
    plot: &Path,
    summary: &Path,
) -> Result<String, Failure> {
    let files = Files {
        out: out.to_path_buf(),
        plot: plot.to_path_buf(),
        summary: summary.to_path_buf(),
    };
    run_input(name, text.as_bytes(), Progress::none(), cli, &files)
}

/// Run the log read from `input` and write its files; returns the summary text (the
/// file also lists the bad rows).
pub(crate) fn run_input(
    name: &str,
    input: impl std::io::BufRead,
    mut progress: Progress,
    cli: &Cli,
    files: &Files,
) -> Result<String, Failure> {
    let settings = settings_for(cli)?;
    let mut table = Table::create(&files.out)?;
    let mut envelope = Envelope::default();
    let mut profile = Profile::default();
    let result = stream::stream(
        input,
        settings,
        cli.strict,
        &mut progress,
        &mut |row, _, p| {
            envelope.add(p);
            profile.add(p);
            table.write(row, p)
        },
    );
    progress.finish();
    let stats = match result {
        Ok(stats) => stats,
        Err(failure) => {
            table.abandon();
            return Err(failure);
        }
    };
    table.finish()?;
    let lists = [
        (&stats.messages, "bad rows"),
        (&stats.warnings, "rows with a dropped channel"),
    ];
    if !cli.quiet {
        for (messages, what) in lists {
            eprint!("{}", terminal_list(name, messages, what, &files.summary));
        }
    }
    let settings = stats.settings.unwrap_or(settings);
    let frame = plot::Frame {
        header: engine::plot_header(name, &settings),
        scale: Scale::of(settings.preset),
    };
    plot::draw(
        &files.plot,
        &frame,
        &envelope,
        &stats.events,
        &stats.story.rest_spans,
    )?;
    let mut plots = files.plot.display().to_string();
    if settings.preset == PresetArg::Balloon {
        let path = profile_path(&files.plot);
        profile::draw(&path, &frame.header, &profile)?;
        plots = format!("{plots} {}", path.display());
    }
    let mut text = summary::summary_text(name, &settings, &stats);
    text.push_str(&format!(
        "files: {} {plots} {}\n",
        files.out.display(),
        files.summary.display()
    ));
    // The file gets the first messages of each list and the count of the others.
    let mut file_text = text.clone();
    for (messages, what) in lists {
        if messages.kept().len() + messages.left_off() > 0 {
            file_text.push_str(&format!("{what}:\n"));
            file_text.push_str(&messages.lines(Messages::LIMIT, "  ", what, " (not listed)"));
        }
    }
    fs::write(&files.summary, &file_text).map_err(io_failure(&files.summary))?;
    Ok(text)
}

/// The balloon's second figure beside the plot `x.svg`: `x.profile.svg`.
pub(crate) fn profile_path(plot: &Path) -> PathBuf {
    plot.with_extension("profile.svg")
}

/// The first 20 messages of a list for the terminal, each after the log's `name`, and
/// the count of the others with where they are listed.
fn terminal_list(name: &str, messages: &Messages, what: &str, summary: &Path) -> String {
    let listed = if messages.left_off() > 0 {
        format!(
            " (the first {} are listed in {})",
            Messages::LIMIT,
            summary.display()
        )
    } else {
        format!(" (listed in {})", summary.display())
    };
    messages.lines(20, &format!("{name}: "), what, &listed)
}

/// Run the log file `input` as the command line asks.
pub(crate) fn run_file(input: &Path, cli: &Cli) -> Result<String, Failure> {
    let files = Files::for_input(input, cli)?;
    let file = fs::File::open(input).map_err(io_failure(input))?;
    let size = file
        .metadata()
        .ok()
        .filter(|m| m.is_file())
        .map(|m| m.len());
    let name = input
        .file_stem()
        .map_or("log".to_string(), |s| s.to_string_lossy().into_owned());
    let reader = std::io::BufReader::with_capacity(1 << 18, file);
    run_input(&name, reader, Progress::new(size, cli.quiet), cli, &files)
}

/// The built-in demo logs with the settings their scenario calls for (the invented
/// sites of examples/sim: the balloon field at 64.2 N, 310 m; the drone yard; the ridge
/// walk starting at 652 m).
/// (name, log text, preset, latitude, start altitude)
pub(crate) type Demo = (
    &'static str,
    &'static str,
    PresetArg,
    Option<f32>,
    Option<f32>,
);

pub(crate) const DEMOS: [Demo; 3] = [
    (
        "balloon",
        include_str!("data/balloon.csv"),
        PresetArg::Balloon,
        Some(64.2),
        Some(310.0),
    ),
    (
        "drone",
        include_str!("data/drone.csv"),
        PresetArg::Drone,
        None,
        Some(0.0),
    ),
    (
        "hike",
        include_str!("data/hike.csv"),
        PresetArg::Hike,
        Some(46.8),
        Some(652.0),
    ),
];

pub(crate) fn run(cli: &Cli) -> Result<(), Failure> {
    match &cli.input {
        Some(input) => {
            let text = run_file(input, cli)?;
            if !cli.quiet {
                print!("{text}");
            }
        }
        None => {
            fs::create_dir_all(&cli.out_dir)
                .map_err(|e| Failure::Io(format!("{}: {e}", cli.out_dir.display())))?;
            for (name, text, preset, lat, start) in DEMOS {
                let demo_cli = Cli {
                    preset: Some(preset),
                    latitude_deg: cli.latitude_deg.or(lat),
                    start_altitude_m: cli.start_altitude_m.or(start),
                    input: None,
                    out: None,
                    plot: None,
                    summary: None,
                    out_dir: cli.out_dir.clone(),
                    model: cli.model,
                    temperature_offset_k: cli.temperature_offset_k,
                    filter: cli.filter,
                    strict: cli.strict,
                    quiet: cli.quiet,
                };
                let dir = &cli.out_dir;
                let text = run_one(
                    name,
                    text,
                    &demo_cli,
                    &dir.join(format!("{name}.out.csv")),
                    &dir.join(format!("{name}.svg")),
                    &dir.join(format!("{name}.summary.txt")),
                )?;
                if !cli.quiet {
                    println!("{text}");
                }
            }
            if !cli.quiet {
                println!(
                    "demo run done: output CSV, SVG plot and summary of each log are in {}",
                    cli.out_dir.display()
                );
            }
        }
    }
    Ok(())
}

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { 1 } else { 0 };
            let _ = e.print();
            return ExitCode::from(code);
        }
    };
    match run(&cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(f) => {
            eprintln!("error: {}", f.message());
            ExitCode::from(f.code())
        }
    }
}
