//! XYZ trajectories: positions in ångström (real species) or σ (reduced fluid).

use crate::physics::{System, UnitSystem};
use std::io::Write;

/// Appends one XYZ frame: atom count, a comment line, then `symbol x y z` per atom, positions
/// folded into the box.
pub fn write_frame<W: Write>(
    out: &mut W,
    system: &System,
    units: &UnitSystem,
    step: u64,
    time: f64,
) -> std::io::Result<()> {
    let (scale, unit) = if units.has_real_units() {
        (units.sigma_angstrom(), "angstrom")
    } else {
        (1.0, "sigma")
    };
    let l = system.box_length * scale;
    writeln!(out, "{}", system.len())?;
    writeln!(out, "step={step} time={time:.6} tau box={l:.6} {unit}")?;
    // A custom species' name may hold spaces: join its words so a line keeps four columns.
    let symbols: Vec<String> = system
        .kinds
        .iter()
        .map(|k| k.symbol().split_whitespace().collect::<Vec<_>>().join("_"))
        .collect();
    for i in 0..system.len() {
        let p = system.wrapped(i);
        let sym = &symbols[system.types[i] as usize];
        writeln!(
            out,
            "{sym} {:.6} {:.6} {:.6}",
            p[0] * scale,
            p[1] * scale,
            p[2] * scale
        )?;
    }
    Ok(())
}
