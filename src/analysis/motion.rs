//! Mean squared displacement and velocity autocorrelation, per species, from one store of time
//! origins on a log-spaced schedule ([`LagSchedule`]).
//!
//! Memory is bounded however long the run: at most [`LagSchedule::max_origins`] origins (97 by
//! default) are stored, each holding the positions and velocities of at most
//! [`MAX_TRACKED_ATOMS`] atoms (48 bytes an atom), so the store never exceeds about 19 MB
//! whatever the atom count or run length; the sums are a fixed number of lags × species ×
//! [`BLOCKS`] blocks.
//!
//! Positions are the simulation's unwrapped coordinates (`physics::System` keeps atoms'
//! coordinates when they leave the box), so a displacement is a plain difference and there is
//! no condition on how often samples are taken.

use super::lags::LagSchedule;
use crate::physics::System;

/// Most atoms followed. Beyond this an evenly spaced subset of each species is followed (every
/// k-th atom of the species): self-motion is an average over atoms, and 4096 of them leave
/// its statistical error dominated by the run length, not by the atom count.
pub const MAX_TRACKED_ATOMS: usize = 4096;

/// Blocks of time origins kept for standard errors. Origins are assigned to blocks by their
/// sample index; when the run outgrows the blocks, neighbouring blocks merge and the block
/// length doubles (as in Flyvbjerg & Petersen, J. Chem. Phys. 91, 461, 1989), so there are
/// between `BLOCKS`/2 and `BLOCKS` blocks once the run is long enough.
pub const BLOCKS: usize = 16;

/// Sums of one block of origins: per lag and species, Σ|Δr|² and Σ v(0)·v(t) over atoms and
/// origins, and the number of origins per lag.
#[derive(Clone, Debug)]
pub(crate) struct BlockSums {
    pub msd: Vec<f64>,
    pub vacf: Vec<f64>,
    pub origins: Vec<u64>,
}

impl BlockSums {
    fn new(lags: usize, species: usize) -> Self {
        BlockSums {
            msd: vec![0.0; lags * species],
            vacf: vec![0.0; lags * species],
            origins: vec![0; lags],
        }
    }

    fn absorb(&mut self, other: &BlockSums) {
        for (a, b) in self.msd.iter_mut().zip(&other.msd) {
            *a += b;
        }
        for (a, b) in self.vacf.iter_mut().zip(&other.vacf) {
            *a += b;
        }
        for (a, b) in self.origins.iter_mut().zip(&other.origins) {
            *a += b;
        }
    }

    fn clear(&mut self) {
        self.msd.iter_mut().for_each(|x| *x = 0.0);
        self.vacf.iter_mut().for_each(|x| *x = 0.0);
        self.origins.iter_mut().for_each(|x| *x = 0);
    }
}

#[derive(Clone)]
struct Origin {
    sample: u64,
    positions: Vec<[f64; 3]>,
    velocities: Vec<[f64; 3]>,
}

/// One point of a per-species time correlation.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LagPoint {
    /// Lag, in reduced time τ.
    pub t: f64,
    pub value: f64,
}

/// The accumulating correlator of the self motion: mean squared displacement and velocity
/// autocorrelation per species, sampled at a fixed interval.
#[derive(Clone)]
pub struct SelfMotion {
    schedule: LagSchedule,
    lags: Vec<u64>,
    interval: f64,
    species: usize,
    tracked: Vec<u32>,
    tracked_type: Vec<u8>,
    tracked_per_species: Vec<usize>,
    origins: Vec<Origin>,
    spare: Vec<Origin>,
    samples: u64,
    block_len: u64,
    blocks: Vec<BlockSums>,
}

impl SelfMotion {
    /// A correlator for the atoms of `system`, with samples `interval` τ apart.
    pub fn new(system: &System, interval: f64, schedule: LagSchedule) -> Self {
        let species = system.kinds.len().max(1);
        let mut tracked = Vec::new();
        let mut tracked_per_species = vec![0; species];
        let counts: Vec<usize> = (0..species)
            .map(|t| system.types.iter().filter(|&&x| x as usize == t).count())
            .collect();
        let total: usize = counts.iter().sum();
        // Each species keeps its share of the tracked atoms (at least one).
        let quota: Vec<usize> = counts
            .iter()
            .map(|&c| {
                if total <= MAX_TRACKED_ATOMS {
                    c
                } else {
                    (c * MAX_TRACKED_ATOMS / total).clamp(c.min(1), c)
                }
            })
            .collect();
        let mut seen = vec![0usize; species];
        for (i, &t) in system.types.iter().enumerate() {
            let t = t as usize;
            // Atom number `seen[t]` of its species is taken when it crosses the next quota mark.
            let take = (seen[t] + 1) * quota[t] / counts[t].max(1) > seen[t] * quota[t] / counts[t].max(1);
            seen[t] += 1;
            if take {
                tracked.push(i as u32);
                tracked_per_species[t] += 1;
            }
        }
        let tracked_type = tracked.iter().map(|&i| system.types[i as usize]).collect();
        let lags = schedule.lags();
        SelfMotion {
            schedule,
            interval,
            species,
            tracked,
            tracked_type,
            tracked_per_species,
            origins: Vec::new(),
            spare: Vec::new(),
            samples: 0,
            block_len: schedule.per_level,
            blocks: vec![BlockSums::new(lags.len(), species); BLOCKS],
            lags,
        }
    }

    /// Time between samples, τ.
    pub fn interval(&self) -> f64 {
        self.interval
    }

    /// Number of species.
    pub fn species(&self) -> usize {
        self.species
    }

    /// Atoms followed of each species.
    pub fn tracked_per_species(&self) -> &[usize] {
        &self.tracked_per_species
    }

    /// Samples added since the start or the last reset.
    pub fn samples(&self) -> u64 {
        self.samples
    }

    /// Origins stored now (bounded by the schedule).
    pub fn stored_origins(&self) -> usize {
        self.origins.len()
    }

    /// Heap bytes of the origin store and sums.
    pub fn heap_bytes(&self) -> usize {
        let per_origin = self.tracked.len() * 48;
        (self.origins.len() + self.spare.len()) * per_origin
            + self.blocks.len() * self.lags.len() * (2 * self.species * 8 + 8)
    }

    /// Forgets every sample (the atoms followed stay the same).
    pub fn reset(&mut self) {
        self.spare.append(&mut self.origins);
        self.samples = 0;
        self.block_len = self.schedule.per_level;
        self.blocks.iter_mut().for_each(BlockSums::clear);
    }

    /// Adds the present positions (unwrapped) and velocities of `system`.
    pub fn add(&mut self, system: &System) {
        let now = self.samples;
        let mut origin = self.spare.pop().unwrap_or_else(|| Origin {
            sample: 0,
            positions: Vec::with_capacity(self.tracked.len()),
            velocities: Vec::with_capacity(self.tracked.len()),
        });
        origin.sample = now;
        origin.positions.clear();
        origin.velocities.clear();
        for &i in &self.tracked {
            origin.positions.push(system.positions[i as usize]);
            origin.velocities.push(system.velocities[i as usize]);
        }
        // Grow the blocks before an origin would fall beyond the last.
        while now / self.block_len >= BLOCKS as u64 {
            let empty = BlockSums::new(self.lags.len(), self.species);
            let mut merged: Vec<BlockSums> = self
                .blocks
                .chunks(2)
                .map(|pair| {
                    let mut a = pair[0].clone();
                    a.absorb(&pair[1]);
                    a
                })
                .collect();
            merged.resize(BLOCKS, empty);
            self.blocks = merged;
            self.block_len *= 2;
        }
        let species = self.species;
        let block_len = self.block_len;
        for o in self.origins.iter().chain(std::iter::once(&origin)) {
            let Some(li) = self.schedule.index(now - o.sample) else {
                continue;
            };
            let block = &mut self.blocks[(o.sample / block_len) as usize];
            block.origins[li] += 1;
            for (k, &t) in self.tracked_type.iter().enumerate() {
                let (p0, p1) = (o.positions[k], origin.positions[k]);
                let (v0, v1) = (o.velocities[k], origin.velocities[k]);
                let d = [p1[0] - p0[0], p1[1] - p0[1], p1[2] - p0[2]];
                let at = li * species + t as usize;
                block.msd[at] += d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
                block.vacf[at] += v0[0] * v1[0] + v0[1] * v1[1] + v0[2] * v1[2];
            }
        }
        self.origins.push(origin);
        let schedule = self.schedule;
        let mut k = 0;
        while k < self.origins.len() {
            if schedule.keeps(self.origins[k].sample, now + 1) {
                k += 1;
            } else {
                let o = self.origins.swap_remove(k);
                self.spare.push(o);
            }
        }
        self.samples += 1;
    }

    /// Lags of the schedule in τ.
    pub fn lag_times(&self) -> Vec<f64> {
        self.lags.iter().map(|&l| l as f64 * self.interval).collect()
    }

    /// The blocks of sums (for the diffusion estimates).
    pub(crate) fn blocks(&self) -> &[BlockSums] {
        &self.blocks
    }

    /// Per-lag mean over `blocks` of a per-atom sum, for `species` (None: every atom followed),
    /// skipping lags without origins.
    pub(crate) fn mean_of(
        &self,
        blocks: &[&BlockSums],
        pick: impl Fn(&BlockSums) -> &[f64],
        species: Option<usize>,
    ) -> Vec<LagPoint> {
        let s = self.species;
        let atoms = match species {
            Some(t) => self.tracked_per_species[t],
            None => self.tracked.len(),
        } as f64;
        let times = self.lag_times();
        (0..self.lags.len())
            .filter_map(|li| {
                let origins: u64 = blocks.iter().map(|b| b.origins[li]).sum();
                if origins == 0 || atoms == 0.0 {
                    return None;
                }
                let sum: f64 = blocks
                    .iter()
                    .map(|b| {
                        let v = pick(b);
                        match species {
                            Some(t) => v[li * s + t],
                            None => v[li * s..(li + 1) * s].iter().sum(),
                        }
                    })
                    .sum();
                Some(LagPoint {
                    t: times[li],
                    value: sum / (origins as f64 * atoms),
                })
            })
            .collect()
    }

    /// Mean squared displacement ⟨|r(t) − r(0)|²⟩ in σ² against the lag, for one species or
    /// (None) all atoms followed.
    pub fn msd(&self, species: Option<usize>) -> Vec<LagPoint> {
        let all: Vec<&BlockSums> = self.blocks.iter().collect();
        self.mean_of(&all, |b| &b.msd, species)
    }

    /// Velocity autocorrelation ⟨v(0)·v(t)⟩ in (σ/τ)², not normalised.
    pub fn vacf(&self, species: Option<usize>) -> Vec<LagPoint> {
        let all: Vec<&BlockSums> = self.blocks.iter().collect();
        self.mean_of(&all, |b| &b.vacf, species)
    }

    /// Velocity autocorrelation normalised by its value at lag 0.
    pub fn vacf_normalised(&self, species: Option<usize>) -> Vec<LagPoint> {
        let c = self.vacf(species);
        let c0 = c
            .first()
            .filter(|p| p.t == 0.0)
            .map(|p| p.value)
            .unwrap_or(f64::NAN);
        c.into_iter()
            .map(|p| LagPoint {
                t: p.t,
                value: p.value / c0,
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::Species;

    fn free_particles(n: usize) -> System {
        System {
            box_length: 5.0,
            positions: (0..n).map(|i| [i as f64 * 0.01, 0.0, 0.0]).collect(),
            velocities: (0..n).map(|i| [1.0 + (i % 3) as f64, 0.0, 0.5]).collect(),
            forces: vec![[0.0; 3]; n],
            types: (0..n).map(|i| (i % 2) as u8).collect(),
            kinds: vec![Species::Argon, Species::Krypton],
            masses: vec![1.0, 2.0],
        }
    }

    #[test]
    fn ballistic_motion_gives_quadratic_msd_and_constant_vacf() {
        // Free flight: r(t) = r(0) + v t, so MSD = ⟨v²⟩ t² and ⟨v(0)·v(t)⟩ = ⟨v²⟩ exactly,
        // also across the unwrapped coordinates that leave the box.
        let mut s = free_particles(30);
        let dt = 0.1;
        let mut m = SelfMotion::new(
            &s,
            dt,
            LagSchedule {
                per_level: 4,
                levels: 3,
            },
        );
        for _ in 0..200 {
            m.add(&s);
            for (p, v) in s.positions.iter_mut().zip(&s.velocities) {
                for k in 0..3 {
                    p[k] += v[k] * dt;
                }
            }
        }
        for t in [0usize, 1] {
            let v2: f64 = (0..30)
                .filter(|i| i % 2 == t)
                .map(|i| s.velocities[i].iter().map(|x| x * x).sum::<f64>())
                .sum::<f64>()
                / 15.0;
            let msd = m.msd(Some(t));
            assert_eq!(msd.len(), m.lags.len());
            for p in &msd {
                assert!((p.value - v2 * p.t * p.t).abs() < 1e-9 * (1.0 + p.value), "{p:?}");
            }
            for p in m.vacf_normalised(Some(t)) {
                assert!((p.value - 1.0).abs() < 1e-12, "{p:?}");
            }
        }
        assert!(
            m.stored_origins()
                <= LagSchedule {
                    per_level: 4,
                    levels: 3
                }
                .max_origins()
        );
    }

    #[test]
    fn large_systems_follow_a_bounded_even_subset_of_each_species() {
        let n = 3 * MAX_TRACKED_ATOMS;
        let s = free_particles(n);
        let m = SelfMotion::new(&s, 1.0, LagSchedule::default());
        let per = m.tracked_per_species();
        assert!(per.iter().sum::<usize>() <= MAX_TRACKED_ATOMS);
        assert!(per.iter().all(|&c| c >= MAX_TRACKED_ATOMS / 2 - 1), "{per:?}");
    }

    #[test]
    fn reset_forgets_samples() {
        let s = free_particles(10);
        let mut m = SelfMotion::new(&s, 1.0, LagSchedule::default());
        for _ in 0..50 {
            m.add(&s);
        }
        m.reset();
        assert!(m.msd(None).is_empty());
        m.add(&s);
        assert_eq!(m.msd(None).len(), 1);
    }
}
