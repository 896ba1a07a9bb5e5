//! The energy log: one CSV row per sample.

use crate::physics::{Observables, UnitSystem};
use std::io::Write;

/// Column header of `energy.csv`: names with units in brackets (reduced units of the reference).
pub const HEADER: &str = "step,time [tau],kinetic per atom [eps],potential per atom [eps],total per atom [eps],conserved per atom [eps],temperature [eps/kB],pressure [eps/sigma^3],relative drift [1]";

/// Extra columns in real units for real species.
pub const HEADER_SI: &str = ",time [ps],temperature [K],pressure [bar],potential per atom [kJ/mol]";

/// Writes energy rows to any sink. Floats use Rust's shortest round-trip form, so the file holds
/// the exact values.
pub struct EnergyLog<W: Write> {
    out: W,
    units: UnitSystem,
}

impl<W: Write> EnergyLog<W> {
    /// Starts a log and writes its header.
    pub fn new(mut out: W, units: UnitSystem) -> std::io::Result<Self> {
        if units.has_real_units() {
            writeln!(out, "{HEADER}{HEADER_SI}")?;
        } else {
            writeln!(out, "{HEADER}")?;
        }
        Ok(EnergyLog { out, units })
    }

    /// Appends one sample.
    pub fn write(&mut self, o: &Observables) -> std::io::Result<()> {
        write!(
            self.out,
            "{},{:e},{:e},{:e},{:e},{:e},{:e},{:e},{:e}",
            o.step, o.time, o.kinetic, o.potential, o.total, o.conserved, o.temperature, o.pressure, o.drift
        )?;
        if self.units.has_real_units() {
            let u = &self.units;
            write!(
                self.out,
                ",{:e},{:e},{:e},{:e}",
                o.time * u.tau_ps(),
                o.temperature * u.temperature_kelvin(),
                o.pressure * u.pressure_bar(),
                o.potential * u.energy_kj_mol()
            )?;
        }
        writeln!(self.out)
    }

    /// The sink, e.g. to flush it and cut it back (a recovering run going back to a snapshot).
    pub fn sink(&mut self) -> &mut W {
        &mut self.out
    }

    /// Flushes and returns the sink.
    pub fn finish(mut self) -> std::io::Result<W> {
        self.out.flush()?;
        Ok(self.out)
    }
}

/// Writes a whole series as CSV text (used by the window's export).
pub fn to_csv(samples: &[Observables], units: UnitSystem) -> String {
    let mut log = EnergyLog::new(Vec::new(), units).expect("writing to memory");
    for s in samples {
        log.write(s).expect("writing to memory");
    }
    String::from_utf8(log.finish().expect("memory")).expect("ascii")
}
