//! Sweep files (RON): a base setup and axes of values; the product of the axes (times the
//! replicas, less the excluded combinations) is the set of points, each a setup of its own.
//!
//! ```text
//! Sweep(
//!     base: "argon-cold-trap.ron",            // a setup file beside the sweep file, or Setup(…)
//!     temperature: [Kelvin(90.0), Kelvin(100.0)],
//!     density: [GramsPerCubicCentimetre(1.30), GramsPerCubicCentimetre(1.40)],
//!     replicas: 2,
//! )
//! ```
//!
//! Points are numbered in the order of the axes as listed here (temperature slowest, then
//! density, timestep, cutoff, atoms, replica fastest). Point i runs with seed `base.seed + i`
//! (wrapping), so any point can be rerun alone from its own setup file with the same result.

use super::setup::{Density, Duration, Length, Setup, SetupError, Start, Temperature};
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};

/// Where the base setup comes from.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(untagged)]
pub enum Base {
    /// A setup file, relative to the sweep file.
    Path(String),
    /// A setup written inline.
    Inline(Box<Setup>),
}

// A string is a path, anything else a setup. (serde's `untagged` buffers the input and loses
// the RON struct name and the setup's defaults on the way, so the choice is made here.)
impl<'de> Deserialize<'de> for Base {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Base, D::Error> {
        struct V;
        impl<'de> serde::de::Visitor<'de> for V {
            type Value = Base;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("a setup file's path as a string, or Setup(…)")
            }
            fn visit_str<E: serde::de::Error>(self, v: &str) -> Result<Base, E> {
                Ok(Base::Path(v.to_string()))
            }
            fn visit_map<A: serde::de::MapAccess<'de>>(self, map: A) -> Result<Base, A::Error> {
                Setup::deserialize(serde::de::value::MapAccessDeserializer::new(map))
                    .map(|s| Base::Inline(Box::new(s)))
            }
        }
        d.deserialize_any(V)
    }
}

/// One combination of axis values to leave out; absent fields match any value.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Exclude {
    #[serde(default)]
    pub temperature: Option<Temperature>,
    #[serde(default)]
    pub density: Option<Density>,
    #[serde(default)]
    pub timestep: Option<Duration>,
    #[serde(default)]
    pub cutoff: Option<Length>,
    #[serde(default)]
    pub atoms: Option<u64>,
}

/// A sweep as written in a sweep file.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Sweep {
    pub base: Base,
    #[serde(default)]
    pub temperature: Vec<Temperature>,
    #[serde(default)]
    pub density: Vec<Density>,
    #[serde(default)]
    pub timestep: Vec<Duration>,
    #[serde(default)]
    pub cutoff: Vec<Length>,
    #[serde(default)]
    pub atoms: Vec<u64>,
    #[serde(default = "one")]
    pub replicas: u64,
    #[serde(default)]
    pub exclude: Vec<Exclude>,
}

fn one() -> u64 {
    1
}

/// Largest number of points a sweep may have without `--yes`.
pub const POINTS_WITHOUT_CONFIRMATION: u64 = 100_000;
/// Largest number of points a sweep may have at all (point folders are numbered with up to
/// seven digits).
pub const MAX_POINTS: u64 = 10_000_000;
/// Largest number of values an axis may list.
pub const MAX_AXIS_VALUES: usize = 10_000;
/// Largest number of replicas.
pub const MAX_REPLICAS: u64 = 1000;

/// One point of a sweep: its setup, its index and the axis values it takes.
#[derive(Clone, Debug, PartialEq)]
pub struct Point {
    pub index: usize,
    pub replica: u64,
    pub setup: Setup,
}

impl Point {
    /// The point's folder name inside the sweep's output folder.
    pub fn folder_name(&self) -> String {
        point_folder(self.index)
    }
}

/// Folder name of point `index`: `point-0000`, `point-0001`, …
pub fn point_folder(index: usize) -> String {
    format!("point-{index:04}")
}

impl Sweep {
    /// Parses sweep text; `file` names it in errors. Values of `exclude` are written plainly
    /// (`(temperature: Kelvin(90.0))`, no `Some(…)`).
    pub fn parse(text: &str, file: &str) -> Result<Sweep, SetupError> {
        let options =
            ron::Options::default().with_default_extension(ron::extensions::Extensions::IMPLICIT_SOME);
        super::ron_text::parse(text, file, options)
    }

    /// Reads a sweep file (at most [`super::setup::MAX_SETUP_BYTES`]).
    pub fn load(path: &Path) -> Result<Sweep, SetupError> {
        let text = super::ron_text::read_text(path, "a sweep is a few hundred")?;
        Sweep::parse(&text, &path.display().to_string())
    }

    /// The base setup: read from its file (relative to `sweep_dir`) or the inline one. A start
    /// file's path is made absolute (an inline setup's is relative to the sweep file), so each
    /// point's own setup file finds it from the point's folder.
    pub fn base_setup(&self, sweep_dir: &Path) -> Result<(Setup, Option<PathBuf>), SetupError> {
        let (mut setup, from) = match &self.base {
            Base::Inline(s) => ((**s).clone(), None),
            Base::Path(p) => {
                let path = sweep_dir.join(p);
                (Setup::load(&path)?, Some(path))
            }
        };
        if let Start::File { path } = &mut setup.start {
            let joined = if Path::new(path.as_str()).is_relative() && from.is_none() {
                sweep_dir.join(path.as_str())
            } else {
                PathBuf::from(path.as_str())
            };
            if let Ok(abs) = std::path::absolute(&joined) {
                *path = abs.display().to_string();
            }
        }
        Ok((setup, from))
    }

    /// Number of points before exclusions: the product of the non-empty axes, times the
    /// replicas.
    pub fn count(&self) -> u64 {
        let axes = [
            self.temperature.len(),
            self.density.len(),
            self.timestep.len(),
            self.cutoff.len(),
            self.atoms.len(),
        ];
        axes.iter()
            .map(|&n| n.max(1) as u64)
            .fold(self.replicas.max(1), |a, n| a.saturating_mul(n))
    }

    /// Checks the axes' sizes and the replicas; the values are checked by [`Sweep::points`].
    fn check_shape(&self) -> Result<(), SetupError> {
        let field = |f: &str, v: String, allowed: String| SetupError::Field {
            field: f.into(),
            value: v,
            allowed,
        };
        for (name, n) in [
            ("temperature", self.temperature.len()),
            ("density", self.density.len()),
            ("timestep", self.timestep.len()),
            ("cutoff", self.cutoff.len()),
            ("atoms", self.atoms.len()),
        ] {
            if n > MAX_AXIS_VALUES {
                return Err(field(
                    name,
                    format!("{n} values"),
                    format!("at most {MAX_AXIS_VALUES}"),
                ));
            }
        }
        if !(1..=MAX_REPLICAS).contains(&self.replicas) {
            return Err(field(
                "replicas",
                self.replicas.to_string(),
                format!("1 to {MAX_REPLICAS}"),
            ));
        }
        let n = self.count();
        if n > MAX_POINTS {
            return Err(field(
                "sweep",
                format!("{n} points"),
                format!("at most {MAX_POINTS}"),
            ));
        }
        Ok(())
    }

    /// Every point, validated: each axis value applied to the base setup must give a valid
    /// setup, or the error names the axis, the value's position and the setup's own message.
    pub fn points(&self, base: &Setup) -> Result<Vec<Point>, SetupError> {
        self.check_shape()?;
        // Each value checked once on its own (the first error is the one users need).
        let axis_error = |axis: &str, i: usize, e: SetupError| match e {
            SetupError::Field {
                field,
                value,
                allowed,
            } => SetupError::Field {
                field: format!("{axis}[{i}] ({field})"),
                value,
                allowed,
            },
            other => other,
        };
        for (i, &t) in self.temperature.iter().enumerate() {
            let s = Setup {
                temperature: t,
                ..base.clone()
            };
            s.resolve().map_err(|e| axis_error("temperature", i, e))?;
        }
        for (i, &d) in self.density.iter().enumerate() {
            let s = Setup {
                density: d,
                ..base.clone()
            };
            s.resolve().map_err(|e| axis_error("density", i, e))?;
        }
        for (i, &dt) in self.timestep.iter().enumerate() {
            let s = Setup {
                timestep: dt,
                ..base.clone()
            };
            s.resolve().map_err(|e| axis_error("timestep", i, e))?;
        }
        for (i, &c) in self.cutoff.iter().enumerate() {
            let s = Setup {
                cutoff: c,
                ..base.clone()
            };
            s.resolve().map_err(|e| axis_error("cutoff", i, e))?;
        }
        for (i, &a) in self.atoms.iter().enumerate() {
            let s = Setup {
                atoms: a,
                ..base.clone()
            };
            s.resolve().map_err(|e| axis_error("atoms", i, e))?;
        }
        let opt = |v: &[Temperature]| -> Vec<Option<Temperature>> {
            if v.is_empty() {
                vec![None]
            } else {
                v.iter().copied().map(Some).collect()
            }
        };
        let temps = opt(&self.temperature);
        let dens: Vec<Option<Density>> = if self.density.is_empty() {
            vec![None]
        } else {
            self.density.iter().copied().map(Some).collect()
        };
        let dts: Vec<Option<Duration>> = if self.timestep.is_empty() {
            vec![None]
        } else {
            self.timestep.iter().copied().map(Some).collect()
        };
        let cuts: Vec<Option<Length>> = if self.cutoff.is_empty() {
            vec![None]
        } else {
            self.cutoff.iter().copied().map(Some).collect()
        };
        let atoms: Vec<Option<u64>> = if self.atoms.is_empty() {
            vec![None]
        } else {
            self.atoms.iter().copied().map(Some).collect()
        };
        let mut out = Vec::new();
        for &t in &temps {
            for &d in &dens {
                for &dt in &dts {
                    for &c in &cuts {
                        for &a in &atoms {
                            let excluded = self.exclude.iter().any(|x| {
                                (x.temperature.is_none() || x.temperature == t)
                                    && (x.density.is_none() || x.density == d)
                                    && (x.timestep.is_none() || x.timestep == dt)
                                    && (x.cutoff.is_none() || x.cutoff == c)
                                    && (x.atoms.is_none() || x.atoms == a)
                            });
                            if excluded {
                                continue;
                            }
                            for replica in 0..self.replicas {
                                let index = out.len();
                                let mut s = base.clone();
                                if let Some(t) = t {
                                    s.temperature = t;
                                }
                                if let Some(d) = d {
                                    s.density = d;
                                }
                                if let Some(dt) = dt {
                                    s.timestep = dt;
                                }
                                if let Some(c) = c {
                                    s.cutoff = c;
                                }
                                if let Some(a) = a {
                                    s.atoms = a;
                                }
                                s.seed = base.seed.wrapping_add(index as u64);
                                if s.title.is_empty() {
                                    s.title = format!("sweep point {index}");
                                } else {
                                    s.title = format!("{} (sweep point {index})", s.title);
                                }
                                // Combinations can fail where single values did not (a cutoff
                                // too long for a smaller box).
                                s.resolve().map_err(|e| match e {
                                    SetupError::Field {
                                        field,
                                        value,
                                        allowed,
                                    } => SetupError::Field {
                                        field: format!("point {index} ({field})"),
                                        value,
                                        allowed,
                                    },
                                    other => other,
                                })?;
                                out.push(Point {
                                    index,
                                    replica,
                                    setup: s,
                                });
                            }
                        }
                    }
                }
            }
        }
        if out.is_empty() {
            return Err(SetupError::Field {
                field: "exclude".into(),
                value: "every combination".into(),
                allowed: "at least one point left".into(),
            });
        }
        Ok(out)
    }
}
