//! The output table, written row by row.

use std::fs;
use std::io::{self, Write};
use std::path::{Path, PathBuf};

use super::Failure;
use super::engine::{Point, flag_names};
use super::numbers::{fixed, shortest_f32, shortest_f64};
use super::row::Row;

/// The output's header row.
pub(crate) const HEADER: &str = "time_s,pressure_pa,altitude_m,vertical_speed_mps,altitude_sigma_m,phase,ascent_m,descent_m,flags";

/// An output CSV being written. A regular file is written under a temporary name beside
/// it and renamed when the run succeeds, so that a run that stops (`--strict`, no usable
/// row) leaves no half table and an older table at that path untouched.
pub(crate) struct Table {
    file: io::BufWriter<fs::File>,
    path: PathBuf,
    /// The temporary name, if the table is renamed at the end.
    part: Option<PathBuf>,
    line: Vec<u8>,
    /// The last row's flag bits and their names as written (rows mostly share them).
    flags: (u64, Vec<u8>),
}

impl Table {
    pub(crate) fn create(path: &Path) -> Result<Self, Failure> {
        // a device or pipe (`/dev/stdout`) is written directly
        let special = fs::metadata(path).is_ok_and(|m| !m.is_file());
        let part = (!special).then(|| {
            let mut name = path.as_os_str().to_owned();
            name.push(".part");
            PathBuf::from(name)
        });
        let target = part.as_deref().unwrap_or(path);
        let file = fs::File::create(target).map_err(io_failure(target))?;
        let mut table = Self {
            file: io::BufWriter::with_capacity(1 << 18, file),
            path: path.to_path_buf(),
            part,
            line: Vec::with_capacity(256),
            flags: (0, Vec::new()),
        };
        writeln!(table.file, "{HEADER}").map_err(io_failure(path))?;
        Ok(table)
    }

    /// Write one row.
    pub(crate) fn write(&mut self, row: &Row, p: &Point) -> Result<(), Failure> {
        let line = &mut self.line;
        line.clear();
        shortest_f64(line, row.time_s);
        line.push(b',');
        match row.pressure_pa {
            Some(v) => shortest_f32(line, v),
            None => line.extend_from_slice(b"NaN"),
        }
        line.push(b',');
        for (v, decimals) in [
            (p.altitude_m, 3),
            (p.vertical_speed_mps, 3),
            (p.altitude_sigma_m, 3),
        ] {
            fixed(line, v, decimals);
            line.push(b',');
        }
        line.extend_from_slice(p.phase.as_bytes());
        line.push(b',');
        fixed(line, p.ascent_m, 2);
        line.push(b',');
        fixed(line, p.descent_m, 2);
        line.push(b',');
        if self.flags.0 != p.flags {
            self.flags.0 = p.flags;
            let names: Vec<&str> = flag_names(p.flags).collect();
            self.flags.1 = names.join("|").into_bytes();
        }
        line.extend_from_slice(&self.flags.1);
        line.push(b'\n');
        self.file.write_all(line).map_err(io_failure(&self.path))
    }

    /// Flush, and give the table its name.
    pub(crate) fn finish(mut self) -> Result<(), Failure> {
        self.file.flush().map_err(io_failure(&self.path))?;
        if let Some(part) = &self.part {
            fs::rename(part, &self.path).map_err(io_failure(&self.path))?;
        }
        Ok(())
    }

    /// Drop an unfinished table (its temporary file; a device is left as it is).
    pub(crate) fn abandon(self) {
        if let Some(part) = &self.part {
            let _ = fs::remove_file(part);
        }
    }
}

pub(crate) fn io_failure(path: &Path) -> impl Fn(io::Error) -> Failure + '_ {
    move |e| Failure::Io(format!("{}: {e}", path.display()))
}

/// Write the collected rows of a run (the tests' [`super::stream::Replay`]) as the tool
/// writes its table.
#[allow(dead_code)] // the tool itself streams
pub(crate) fn write_output(path: &Path, replay: &super::stream::Replay) -> Result<(), Failure> {
    let mut table = Table::create(path)?;
    for (row, o) in &replay.outputs {
        table.write(row, &super::engine::point(o, row))?;
    }
    table.finish()
}
