//! The radial distribution function g(r), accumulated over configurations.

use crate::physics::Simulation;
use crate::physics::geometry::separation;
use std::f64::consts::PI;

/// A histogram of pair distances normalised to g(r): the ratio of the pair density at distance
/// r to that of an ideal gas at the same density (Allen & Tildesley, *Computer Simulation of
/// Liquids*, 2nd ed., 2017, §2.6 and §8.2).
#[derive(Clone, Debug)]
pub struct RadialDistribution {
    r_max: f64,
    counts: Vec<u64>,
    frames: u64,
    atoms: usize,
    volume: f64,
}

/// One bin of g(r).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RdfPoint {
    /// Bin centre.
    pub r: f64,
    pub g: f64,
    /// Running coordination number: mean neighbours within the bin's outer edge.
    pub coordination: f64,
}

impl RadialDistribution {
    /// An empty histogram of `bins` bins up to `r_max`.
    pub fn new(r_max: f64, bins: usize) -> Self {
        RadialDistribution {
            r_max,
            counts: vec![0; bins.max(1)],
            frames: 0,
            atoms: 0,
            volume: 0.0,
        }
    }

    /// Upper edge of the histogram.
    pub fn r_max(&self) -> f64 {
        self.r_max
    }

    /// Configurations added so far.
    pub fn frames(&self) -> u64 {
        self.frames
    }

    /// Adds one configuration given as positions in a cubic box of edge `l` and the unordered
    /// pairs to look at (every pair closer than `r_max` must be among them).
    pub fn add_pairs(
        &mut self,
        positions: &[[f64; 3]],
        l: f64,
        pairs: impl IntoIterator<Item = (usize, usize)>,
    ) {
        let bins = self.counts.len();
        let scale = bins as f64 / self.r_max;
        let r2_max = self.r_max * self.r_max;
        for (i, j) in pairs {
            let r2 = separation(&positions[i], &positions[j], l, 1.0 / l).1;
            if r2 < r2_max {
                let k = ((r2.sqrt() * scale) as usize).min(bins - 1);
                self.counts[k] += 1;
            }
        }
        self.frames += 1;
        self.atoms = positions.len();
        self.volume = l * l * l;
    }

    /// Adds the simulation's present configuration, using its neighbour list (so `r_max` must
    /// not exceed the cutoff: beyond it the list is incomplete).
    pub fn add(&mut self, sim: &Simulation) {
        let list = sim.neighbour_list();
        let s = sim.system();
        let n = s.len();
        let pairs = (0..n).flat_map(|i| list.partners(i).iter().map(move |&j| (i, j as usize)));
        self.add_pairs(&s.positions, s.box_length, pairs);
    }

    /// The normalised histogram.
    pub fn points(&self) -> Vec<RdfPoint> {
        let bins = self.counts.len();
        let dr = self.r_max / bins as f64;
        if self.frames == 0 || self.atoms < 2 {
            return Vec::new();
        }
        let n = self.atoms as f64;
        let rho = n / self.volume;
        let mut running = 0.0;
        (0..bins)
            .map(|k| {
                let (lo, hi) = (k as f64 * dr, (k + 1) as f64 * dr);
                let shell = 4.0 / 3.0 * PI * (hi.powi(3) - lo.powi(3));
                // Each unordered pair counted once: both atoms see it.
                let per_atom = 2.0 * self.counts[k] as f64 / (self.frames as f64 * n);
                running += per_atom;
                RdfPoint {
                    r: 0.5 * (lo + hi),
                    g: per_atom / (rho * shell),
                    coordination: running,
                }
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::random::{Purpose, Stream};

    #[test]
    fn uniform_points_give_g_of_one() {
        // An ideal gas (uncorrelated uniform points) has g(r) = 1 at every r, up to
        // counting noise and the (N−1)/N finite-size factor.
        let (n, l) = (600usize, 10.0);
        let mut rdf = RadialDistribution::new(4.0, 8);
        let mut s = Stream::new(9, Purpose::LatticeSites, 0, 0);
        for _ in 0..40 {
            let pos: Vec<[f64; 3]> = (0..n)
                .map(|_| [s.uniform() * l, s.uniform() * l, s.uniform() * l])
                .collect();
            let pairs = (0..n).flat_map(|i| (i + 1..n).map(move |j| (i, j)));
            rdf.add_pairs(&pos, l, pairs);
        }
        for p in rdf.points().iter().skip(2) {
            assert!((p.g - 1.0).abs() < 0.05, "{p:?}");
        }
    }

    #[test]
    fn fcc_lattice_has_twelve_nearest_neighbours() {
        // fcc: 12 neighbours at a/√2, the next 6 at a (crystallography, e.g. Kittel, Introduction
        // to Solid State Physics, ch. 1).
        let (pos, _) = crate::physics::lattice::fcc_start(&[500], 9.0, 1);
        let a: f64 = 9.0 / 5.0;
        let mut rdf = RadialDistribution::new(0.5 * (a / 2f64.sqrt() + a), 50);
        let n = pos.len();
        rdf.add_pairs(&pos, 9.0, (0..n).flat_map(|i| (i + 1..n).map(move |j| (i, j))));
        let last = rdf.points().last().copied().unwrap();
        assert!((last.coordination - 12.0).abs() < 1e-9, "{last:?}");
        let peak = rdf
            .points()
            .into_iter()
            .max_by(|x, y| x.g.total_cmp(&y.g))
            .unwrap();
        assert!((peak.r - a / 2f64.sqrt()).abs() < rdf.r_max() / 50.0, "{peak:?}");
    }
}
