//! Start configurations from XYZ files (`start: File(path: "start.xyz")` in a setup).
//!
//! The plain XYZ layout: the atom count on the first line, a comment on the second, then one
//! line per atom, `NAME x y z`. NAME is an element symbol (`Ar`) or one of our species names
//! (`Argon`, `argon`, `ReducedLJ`, `LJ`); columns after z are ignored. Coordinates are in Å
//! for real species and in σ for the reduced fluid. They are folded into the box the setup's
//! atom count and density give. The file's atom order becomes the run's atom order, so atom
//! indices in alarms and outputs are the file's (0-based).
//!
//! Every error names the file, the line and the column (1-based), as a setup error does.

use super::capped_read::read_capped;
use super::setup::SetupError;
use crate::physics::Species;
use crate::physics::geometry::fold;
use std::path::Path;

/// Largest start file read: a million atoms at about 100 bytes a line.
pub const MAX_START_BYTES: u64 = 128 << 20;

/// What a start file gives: positions (σ of the reference species, folded into the box) and
/// the species index of each atom into the setup's list.
#[derive(Clone, Debug, PartialEq)]
pub struct StartConfiguration {
    pub positions: Vec<[f64; 3]>,
    pub types: Vec<u8>,
}

/// The species a name stands for: its symbol, its label or its setup name, in any case.
pub fn species_named(name: &str) -> Option<Species> {
    Species::ALL.into_iter().find(|s| {
        [s.symbol(), s.label(), &format!("{s:?}")]
            .iter()
            .any(|n| n.eq_ignore_ascii_case(name))
    })
}

/// Reads the start file at `path` for a setup with `species` (in its order), `counts` atoms of
/// each, a box of edge `box_length` σ, and `angstrom_per_sigma` Å in the reference σ (1 for the
/// reduced fluid, whose coordinates are in σ).
pub fn read(
    path: &Path,
    species: &[Species],
    counts: &[usize],
    box_length: f64,
    angstrom_per_sigma: f64,
) -> Result<StartConfiguration, SetupError> {
    let file = path.display().to_string();
    let bytes = read_capped(path, MAX_START_BYTES)
        .map_err(|e| SetupError::Read {
            file: file.clone(),
            message: format!("start file: {e}"),
        })?
        .map_err(|size| SetupError::Read {
            file: file.clone(),
            message: format!(
                "start file size {size} is out of range; allowed: at most {MAX_START_BYTES} bytes"
            ),
        })?;
    let text = String::from_utf8(bytes).map_err(|_| SetupError::Read {
        file: file.clone(),
        message: "start file is not valid UTF-8 text".into(),
    })?;
    parse(&text, &file, species, counts, box_length, angstrom_per_sigma)
}

/// [`read`] on text already in memory; `file` names it in errors.
pub fn parse(
    text: &str,
    file: &str,
    species: &[Species],
    counts: &[usize],
    box_length: f64,
    angstrom_per_sigma: f64,
) -> Result<StartConfiguration, SetupError> {
    let at = |line: usize, column: usize, message: String| SetupError::Parse {
        file: file.to_string(),
        line,
        column,
        message,
    };
    let atoms: usize = counts.iter().sum();
    let mut lines = text.lines().enumerate().map(|(i, l)| (i + 1, l));
    let (n, first) = lines
        .next()
        .ok_or_else(|| at(1, 1, "empty file; expected the atom count".into()))?;
    let count_text = first.trim();
    let column = first.len() - first.trim_start().len() + 1;
    let count: usize = count_text.parse().map_err(|_| {
        at(
            n,
            column,
            format!("atom count {count_text:?} is not a whole number"),
        )
    })?;
    if count != atoms {
        return Err(at(
            n,
            column,
            format!("atom count {count} is out of range; allowed: {atoms}, the setup's `atoms`"),
        ));
    }
    lines
        .next()
        .ok_or_else(|| at(2, 1, "missing comment line (line 2)".into()))?;
    let mut positions = Vec::with_capacity(atoms);
    let mut types = Vec::with_capacity(atoms);
    let mut seen = vec![0usize; species.len()];
    for (n, line) in lines.by_ref().take(atoms) {
        let fields = columns(line);
        let Some(&(c, name)) = fields.first() else {
            return Err(at(
                n,
                1,
                format!("empty line; expected `NAME x y z` for atom {}", types.len()),
            ));
        };
        let kind = species_named(name).ok_or_else(|| {
            at(
                n,
                c,
                format!("{name:?} is not a species; allowed: He, Ne, Ar, Kr, Xe, LJ or a species name"),
            )
        })?;
        let t = species.iter().position(|&s| s == kind).ok_or_else(|| {
            let listed: Vec<&str> = species.iter().map(|s| s.symbol()).collect();
            at(
                n,
                c,
                format!(
                    "{} is not in the setup; allowed: {}",
                    kind.label(),
                    listed.join(", ")
                ),
            )
        })?;
        let mut p = [0.0; 3];
        for (k, x) in p.iter_mut().enumerate() {
            let Some(&(c, word)) = fields.get(k + 1) else {
                let end = line.len() + 1;
                return Err(at(n, end, format!("missing {} coordinate", ["x", "y", "z"][k])));
            };
            let v: f64 = word.parse().map_err(|_| {
                at(
                    n,
                    c,
                    format!("{} coordinate {word:?} is not a number", ["x", "y", "z"][k]),
                )
            })?;
            if !v.is_finite() || v.abs() > 1e9 {
                return Err(at(
                    n,
                    c,
                    format!(
                        "{} coordinate {word} is out of range; allowed: finite, at most 1e9 in size",
                        ["x", "y", "z"][k]
                    ),
                ));
            }
            *x = fold(v / angstrom_per_sigma, box_length);
            // Folding can round up to the edge itself.
            if *x >= box_length {
                *x = 0.0;
            }
        }
        seen[t] += 1;
        positions.push(p);
        types.push(t as u8);
    }
    if positions.len() < atoms {
        let last = text.lines().count();
        return Err(at(
            last + 1,
            1,
            format!(
                "the file ends after {} atoms; the first line promised {atoms}",
                positions.len()
            ),
        ));
    }
    if let Some((n, extra)) = lines.find(|(_, l)| !l.trim().is_empty()) {
        let c = extra.len() - extra.trim_start().len() + 1;
        return Err(at(
            n,
            c,
            format!("more lines than the {atoms} atoms of the first line"),
        ));
    }
    if seen != counts {
        let say = |c: &[usize]| -> String {
            species
                .iter()
                .zip(c)
                .map(|(s, n)| format!("{n} {}", s.symbol()))
                .collect::<Vec<_>>()
                .join(", ")
        };
        return Err(SetupError::Field {
            field: "start".into(),
            value: format!("{file} holds {}", say(&seen)),
            allowed: format!("the atoms the setup's shares give: {}", say(counts)),
        });
    }
    Ok(StartConfiguration { positions, types })
}

/// The words of a line with their 1-based columns.
fn columns(line: &str) -> Vec<(usize, &str)> {
    let mut out = Vec::new();
    let mut start = None;
    for (i, ch) in line.char_indices().chain(std::iter::once((line.len(), ' '))) {
        match (ch.is_whitespace(), start) {
            (false, None) => start = Some(i),
            (true, Some(s)) => {
                out.push((line[..s].chars().count() + 1, &line[s..i]));
                start = None;
            }
            _ => {}
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    const TWO: &str = "3\nhand-made\nAr 1.0 2.0 3.0\nargon -1.0 0.0 40.0   extra\n  Kr 0 0 0\n";

    fn two(text: &str) -> Result<StartConfiguration, SetupError> {
        parse(
            text,
            "s.xyz",
            &[Species::Argon, Species::Krypton],
            &[2, 1],
            10.0,
            2.0,
        )
    }

    #[test]
    fn names_units_and_folding() {
        let c = two(TWO).unwrap();
        assert_eq!(c.types, [0, 0, 1]);
        assert_eq!(c.positions[0], [0.5, 1.0, 1.5]);
        assert_eq!(c.positions[1], [9.5, 0.0, 0.0]);
        assert_eq!(species_named("REDUCEDLJ"), Some(Species::ReducedLJ));
        assert_eq!(species_named("lj"), Some(Species::ReducedLJ));
    }

    fn error(text: &str) -> String {
        two(text).unwrap_err().to_string()
    }

    #[test]
    fn errors_name_file_line_and_column() {
        assert_eq!(
            error("4\nx\n"),
            "s.xyz:1:1: atom count 4 is out of range; allowed: 3, the setup's `atoms`"
        );
        assert_eq!(
            error("3\nx\nAr 1 2 3\nAr 1 zwei 3\nKr 0 0 0\n"),
            "s.xyz:4:6: y coordinate \"zwei\" is not a number"
        );
        assert!(
            error("3\nx\nAr 1 2 3\nXe 1 2 3\nKr 0 0 0\n").starts_with("s.xyz:4:1: xenon is not in the setup")
        );
        assert!(error("3\nx\nAr 1 2 3\nQq 1 2 3\n").starts_with("s.xyz:4:1: \"Qq\" is not a species"));
        assert_eq!(error("3\nx\nAr 1 2\n"), "s.xyz:3:7: missing z coordinate");
        assert!(error("3\nx\nAr 1 2 3\n").starts_with("s.xyz:4:1: the file ends after 1 atoms"));
        assert!(
            error("3\nx\nAr 1 2 3\nAr 1 2 inf\nKr 0 0 0\n")
                .starts_with("s.xyz:4:8: z coordinate inf is out of range")
        );
        assert!(error(&format!("{TWO}Kr 1 1 1\n")).starts_with("s.xyz:6:1: more lines"));
        assert_eq!(
            error("3\nx\nAr 1 2 3\nKr 1 2 3\nKr 0 0 0\n"),
            "start: s.xyz holds 1 Ar, 2 Kr is out of range; allowed: the atoms the setup's shares give: 2 Ar, 1 Kr"
        );
    }
}
