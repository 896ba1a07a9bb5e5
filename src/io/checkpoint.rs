//! Checkpoints: the exact state of a run, written atomically.
//!
//! Layout (all integers little-endian):
//! `NOBLESCOPE-STATE 3\n`, u64 header length, a JSON header (setup, spec, scalars), then the raw
//! arrays — types (u8 × N), positions and velocities (f64 × 3N each), list reference positions
//! (f32 × 3N) —, the sample store's entries when the header lists a store
//! ([`super::checkpoint_samples`]), and an FNV-1a 64 checksum of everything before it. Version 2
//! files (the same without a sample store) are still read. Floats are stored as their bits, so a
//! continued run is bit-for-bit the run that was saved.
//!
//! Reading never trusts a length from the file: the whole file is read through a cap
//! ([`MAX_CHECKPOINT_BYTES`]), the header length is checked against the bytes actually read and
//! [`MAX_HEADER_BYTES`], and the atom count against the array bytes, before anything is
//! allocated from them. A decoded checkpoint is then checked like a setup file
//! ([`Checkpoint::check`]).

use super::checkpoint_samples::{self, MAX_SAMPLES_BYTES, SamplesHeader};
use crate::analysis::SampleStore;
use crate::io::setup::{MAX_ATOMS, MAX_SETUP_BYTES, Setup, SetupError};
use crate::physics::{SimulationSpec, SimulationState};
use serde::{Deserialize, Serialize};
use std::io::Write;
use std::path::Path;

const MAGIC: &[u8] = b"NOBLESCOPE-STATE 3\n";
/// The magic of version 2 files, read too; same length as [`MAGIC`].
const MAGIC_V2: &[u8] = b"NOBLESCOPE-STATE 2\n";
/// Type, position, velocity and list reference of one atom.
const BYTES_PER_ATOM: usize = 1 + 24 + 24 + 12;

/// Largest JSON header a checkpoint may have. It holds the embedded setup, the RON of a setup
/// file of at most [`MAX_SETUP_BYTES`], in which escaping grows a character at most eightfold
/// (a control character in the title becomes `\u{1f}` in RON and its backslash `\\` in JSON),
/// and the spec and scalars, well under 4 KiB.
pub const MAX_HEADER_BYTES: u64 = 8 * MAX_SETUP_BYTES + 4096;

/// Largest checkpoint file read: magic, length, the largest header and the arrays of
/// [`MAX_ATOMS`] atoms, plus the checksum (about 63 MB).
pub const MAX_CHECKPOINT_BYTES: u64 =
    MAGIC.len() as u64 + 8 + MAX_HEADER_BYTES + MAX_ATOMS * BYTES_PER_ATOM as u64 + MAX_SAMPLES_BYTES + 8;

/// What a checkpoint holds.
#[derive(Clone, Debug, PartialEq)]
pub struct Checkpoint {
    /// The setup the run was started from, with any live changes folded in.
    pub setup: Setup,
    /// The spec in force when saved.
    pub spec: SimulationSpec,
    pub state: SimulationState,
    /// The followed quantities of the run so far (absent in version 2 files).
    pub samples: Option<SampleStore>,
}

#[derive(Serialize, Deserialize)]
struct Header {
    setup_ron: String,
    spec: SimulationSpec,
    atoms: usize,
    step: u64,
    time: f64,
    box_length: f64,
    list_builds: u64,
    heat: f64,
    drift_origin: f64,
    drift_scale: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    samples: Option<SamplesHeader>,
}

/// Why a checkpoint could not be read or written.
#[derive(Debug, thiserror::Error)]
pub enum CheckpointError {
    #[error("{file}: {message}")]
    Io { file: String, message: String },
    #[error("{file}: not a Noblescope checkpoint or damaged ({message})")]
    Format { file: String, message: String },
    /// The file is larger than any checkpoint can be.
    #[error(
        "{file}: size {size} is out of range; allowed: at most {MAX_CHECKPOINT_BYTES} bytes (the checkpoint of {MAX_ATOMS} atoms)"
    )]
    TooLarge {
        file: String,
        /// The size, or "more than …" when the file is not a regular one.
        size: String,
    },
    /// The file decodes, but its contents cannot be continued ([`Checkpoint::check`]).
    #[error("{file}: {source}")]
    Invalid { file: String, source: SetupError },
}

fn fnv1a(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= b as u64;
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    h
}

impl Checkpoint {
    /// Encodes to bytes.
    pub fn to_bytes(&self) -> Vec<u8> {
        let s = &self.state;
        let (samples_header, samples_bytes) = match &self.samples {
            Some(store) => {
                let (h, b) = checkpoint_samples::encode(store);
                (Some(h), b)
            }
            None => (None, Vec::new()),
        };
        let header = Header {
            setup_ron: self.setup.to_ron(),
            spec: self.spec.clone(),
            atoms: s.positions.len(),
            step: s.step,
            time: s.time,
            box_length: s.box_length,
            list_builds: s.list_builds,
            heat: s.heat,
            drift_origin: s.drift_origin,
            drift_scale: s.drift_scale,
            samples: samples_header,
        };
        let json = serde_json::to_vec(&header).expect("header serialises");
        let n = s.positions.len();
        let mut out = Vec::with_capacity(MAGIC.len() + 8 + json.len() + n * BYTES_PER_ATOM + 8);
        out.extend_from_slice(MAGIC);
        out.extend_from_slice(&(json.len() as u64).to_le_bytes());
        out.extend_from_slice(&json);
        out.extend_from_slice(&s.types);
        for arr in [&s.positions, &s.velocities] {
            for v in arr.iter() {
                for x in v {
                    out.extend_from_slice(&x.to_bits().to_le_bytes());
                }
            }
        }
        for v in &s.list_reference {
            for x in v {
                out.extend_from_slice(&x.to_bits().to_le_bytes());
            }
        }
        out.extend_from_slice(&samples_bytes);
        let sum = fnv1a(&out);
        out.extend_from_slice(&sum.to_le_bytes());
        out
    }

    /// Decodes from bytes; `file` names the source in errors.
    pub fn from_bytes(bytes: &[u8], file: &str) -> Result<Checkpoint, CheckpointError> {
        let bad = |m: &str| CheckpointError::Format {
            file: file.into(),
            message: m.into(),
        };
        if bytes.len() < MAGIC.len() + 16
            || (&bytes[..MAGIC.len()] != MAGIC && &bytes[..MAGIC.len()] != MAGIC_V2)
        {
            return Err(bad("missing header"));
        }
        let (body, tail) = bytes.split_at(bytes.len() - 8);
        if fnv1a(body) != u64::from_le_bytes(tail.try_into().unwrap()) {
            return Err(bad("checksum mismatch: the file is truncated or changed"));
        }
        let mut at = MAGIC.len();
        let hlen = u64::from_le_bytes(body[at..at + 8].try_into().unwrap());
        at += 8;
        if hlen > (body.len() - at) as u64 {
            return Err(bad("header length beyond the end"));
        }
        if hlen > MAX_HEADER_BYTES {
            return Err(bad(&format!(
                "header length {hlen} is out of range; allowed: at most {MAX_HEADER_BYTES} bytes"
            )));
        }
        let hlen = hlen as usize;
        let json = &body[at..at + hlen];
        let header: Header = serde_json::from_slice(json).map_err(|e| match null_field(json) {
            // JSON has no NaN or infinity: the writer turned a non-finite number into null.
            Some(field) => CheckpointError::Invalid {
                file: file.into(),
                source: SetupError::Field {
                    field,
                    value: "null (a NaN or infinity when written)".into(),
                    allowed: "a finite number".into(),
                },
            },
            None => bad(&e.to_string()),
        })?;
        at += hlen;
        let n = header.atoms;
        let samples_bytes = match &header.samples {
            Some(h) => h
                .section_bytes()
                .ok_or_else(|| bad("sample store larger than any run keeps"))?,
            None => 0,
        };
        if n.checked_mul(BYTES_PER_ATOM)
            .and_then(|b| b.checked_add(samples_bytes))
            != Some(body.len() - at)
        {
            return Err(bad("array sizes do not match the atom count"));
        }
        let types = body[at..at + n].to_vec();
        at += n;
        let mut take = |bytes: usize| {
            let part = &body[at..at + bytes];
            at += bytes;
            part
        };
        let positions = triples(take(24 * n), |b| {
            f64::from_bits(u64::from_le_bytes(b.try_into().unwrap()))
        });
        let velocities = triples(take(24 * n), |b| {
            f64::from_bits(u64::from_le_bytes(b.try_into().unwrap()))
        });
        let list_reference = triples(take(12 * n), |b| {
            f32::from_bits(u32::from_le_bytes(b.try_into().unwrap()))
        });
        let samples = match &header.samples {
            Some(h) => Some(
                checkpoint_samples::decode(h, take(samples_bytes))
                    .map_err(|m| bad(&format!("sample store: {m}")))?,
            ),
            None => None,
        };
        let setup = Setup::parse(&header.setup_ron, &format!("{file} (embedded setup)"))
            .map_err(|e| bad(&e.to_string()))?;
        Ok(Checkpoint {
            setup,
            spec: header.spec,
            state: SimulationState {
                step: header.step,
                time: header.time,
                box_length: header.box_length,
                types,
                positions,
                velocities,
                list_reference,
                list_builds: header.list_builds,
                heat: header.heat,
                drift_origin: header.drift_origin,
                drift_scale: header.drift_scale,
            },
            samples,
        })
    }

    /// Writes atomically: to a temporary file beside `path`, flushed to disk, then renamed over
    /// it, so an interrupted write leaves the previous checkpoint intact.
    pub fn save(&self, path: &Path) -> Result<(), CheckpointError> {
        write_atomically(path, &self.to_bytes())
    }

    /// Reads a checkpoint file (at most [`MAX_CHECKPOINT_BYTES`] of it, so a device or a pipe is
    /// never read past that), decodes it and checks it ([`Checkpoint::check`]).
    pub fn load(path: &Path) -> Result<Checkpoint, CheckpointError> {
        let file = path.display().to_string();
        let io = |e: std::io::Error| CheckpointError::Io {
            file: file.clone(),
            message: e.to_string(),
        };
        let bytes = super::capped_read::read_capped(path, MAX_CHECKPOINT_BYTES)
            .map_err(io)?
            .map_err(|size| CheckpointError::TooLarge {
                file: file.clone(),
                size,
            })?;
        let c = Checkpoint::from_bytes(&bytes, &file)?;
        c.check().map_err(|source| CheckpointError::Invalid {
            file: file.clone(),
            source,
        })?;
        Ok(c)
    }
}

/// The first null in a JSON header, named as a checkpoint field (e.g. `checkpoint.heat`).
fn null_field(json: &[u8]) -> Option<String> {
    fn find(v: &serde_json::Value, path: String) -> Option<String> {
        match v {
            serde_json::Value::Null => Some(path),
            serde_json::Value::Object(m) => m.iter().find_map(|(k, v)| find(v, format!("{path}.{k}"))),
            serde_json::Value::Array(a) => a
                .iter()
                .enumerate()
                .find_map(|(i, v)| find(v, format!("{path}[{i}]"))),
            _ => None,
        }
    }
    find(&serde_json::from_slice(json).ok()?, "checkpoint".into())
}

/// Decodes little-endian 3-vectors; `word` turns one element's bytes into a number.
fn triples<T: Copy>(bytes: &[u8], word: impl Fn(&[u8]) -> T) -> Vec<[T; 3]> {
    let size = std::mem::size_of::<T>();
    bytes
        .chunks_exact(3 * size)
        .map(|c| [word(&c[..size]), word(&c[size..2 * size]), word(&c[2 * size..])])
        .collect()
}

/// Writes `bytes` to `path` through a temporary file and a rename.
pub fn write_atomically(path: &Path, bytes: &[u8]) -> Result<(), CheckpointError> {
    let file = path.display().to_string();
    let io = |e: std::io::Error| CheckpointError::Io {
        file: file.clone(),
        message: e.to_string(),
    };
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "checkpoint".into());
    let tmp = path.with_file_name(format!(".{name}.partial-{}", std::process::id()));
    let result = (|| {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result.map_err(io)
}
