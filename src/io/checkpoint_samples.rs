//! The sample store's section of a checkpoint: the followed quantities of the run so far, so a
//! continued run judges equilibration and precision over the whole run, as the run it continues
//! would have.
//!
//! The scalars go into the checkpoint's JSON header ([`SamplesHeader`], floats as their bits);
//! the entries follow the atom arrays as raw little-endian words: for each entry its step (u64),
//! time (f64) and the five values (f64), [`BYTES_PER_ENTRY`] bytes.

use crate::analysis::SampleStore;
use crate::analysis::quantity::QUANTITIES;
use crate::analysis::sample_store::{DEFAULT_CAPACITY, StoreParts};
use serde::{Deserialize, Serialize};

/// Bytes of one stored entry.
pub const BYTES_PER_ENTRY: usize = 8 * (2 + QUANTITIES);
/// Largest samples section: a store of [`DEFAULT_CAPACITY`] entries.
pub const MAX_SAMPLES_BYTES: u64 = (DEFAULT_CAPACITY * BYTES_PER_ENTRY) as u64;

/// The store's scalars, in the header.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SamplesHeader {
    pub capacity: usize,
    pub width: u64,
    pub raw: u64,
    pub entries: usize,
    pub pending_step: u64,
    /// f64 bits.
    pub pending_time: u64,
    /// f64 bits.
    pub pending_sums: [u64; QUANTITIES],
    pub pending_count: u64,
}

impl SamplesHeader {
    /// Bytes of the section that follows the arrays, `None` when absurdly large.
    pub fn section_bytes(&self) -> Option<usize> {
        self.entries
            .checked_mul(BYTES_PER_ENTRY)
            .filter(|&b| b as u64 <= MAX_SAMPLES_BYTES)
    }
}

/// Header and section bytes of a store.
pub fn encode(store: &SampleStore) -> (SamplesHeader, Vec<u8>) {
    let p = store.to_parts();
    let header = SamplesHeader {
        capacity: p.capacity,
        width: p.width,
        raw: p.raw,
        entries: p.steps.len(),
        pending_step: p.pending_step,
        pending_time: p.pending_time.to_bits(),
        pending_sums: p.pending_sums.map(f64::to_bits),
        pending_count: p.pending_count,
    };
    let mut bytes = Vec::with_capacity(p.steps.len() * BYTES_PER_ENTRY);
    for i in 0..p.steps.len() {
        bytes.extend_from_slice(&p.steps[i].to_le_bytes());
        bytes.extend_from_slice(&p.times[i].to_bits().to_le_bytes());
        for v in &p.values {
            bytes.extend_from_slice(&v[i].to_bits().to_le_bytes());
        }
    }
    (header, bytes)
}

/// The store from its header and exactly [`SamplesHeader::section_bytes`] bytes; the error
/// says what is inconsistent.
pub fn decode(h: &SamplesHeader, bytes: &[u8]) -> Result<SampleStore, String> {
    if h.section_bytes() != Some(bytes.len()) {
        return Err(format!(
            "samples section of {} bytes for {} entries",
            bytes.len(),
            h.entries
        ));
    }
    if h.capacity > DEFAULT_CAPACITY {
        return Err(format!(
            "sample capacity {} (allowed: at most {DEFAULT_CAPACITY})",
            h.capacity
        ));
    }
    let word = |c: &[u8]| u64::from_le_bytes(c.try_into().unwrap());
    let mut steps = Vec::with_capacity(h.entries);
    let mut times = Vec::with_capacity(h.entries);
    let mut values: [Vec<f64>; QUANTITIES] = Default::default();
    for entry in bytes.chunks_exact(BYTES_PER_ENTRY) {
        steps.push(word(&entry[..8]));
        times.push(f64::from_bits(word(&entry[8..16])));
        for (k, v) in values.iter_mut().enumerate() {
            v.push(f64::from_bits(word(&entry[16 + 8 * k..24 + 8 * k])));
        }
    }
    SampleStore::from_parts(StoreParts {
        capacity: h.capacity,
        width: h.width,
        raw: h.raw,
        steps,
        times,
        values,
        pending_step: h.pending_step,
        pending_time: f64::from_bits(h.pending_time),
        pending_sums: h.pending_sums.map(f64::from_bits),
        pending_count: h.pending_count,
    })
}
