//! Property tests of the neighbour search and the force loop against all-pairs references.
//!
//! Reference: the Verlet list with a skin and the cell list are the standard constructions of
//! Allen & Tildesley, *Computer Simulation of Liquids* (2nd ed., 2017), §5.3; their defining
//! property is that the list holds every pair within r_c + skin under the minimum-image
//! convention (same book, §1.6). The forces from the list must then equal the all-pairs sum
//! (`forces::brute_force`) up to the rounding of a different summation order.
//!
//! Contract checked (doc comment of `NeighbourList::build`): the search runs on the folded
//! positions rounded to single precision (so that a checkpoint can rebuild the identical list)
//! with a margin of 1e-4 σ + 1e-6 L on the reach, whether it uses the cell list (three or more
//! cells per edge) or all pairs; so the list must hold every pair within r_c + skin, and may
//! hold a few more, none beyond the reach plus that margin (here allowed twice over for the
//! rounding of the single-precision distances themselves). Each unordered pair is stored once.
//!
//! Tolerance: each force component, the energy and the virial are compared with a bound of
//! 1e-10 × Σ|terms| (the sum of magnitudes of the pair contributions to that quantity). A
//! reordered sum of m floating-point terms differs by at most about m·ε·Σ|terms| (standard
//! rounding-error bound, Higham, *Accuracy and Stability of Numerical Algorithms*, 2nd ed.,
//! §4.2), far below 1e-10 for m ≤ 400; a missing or doubled pair is far above it.
//!
//! Library: proptest 1.x (dev-dependency). Case counts are kept modest so the file runs in a
//! few seconds in release.

use noblescope::physics::PotentialMode;
use noblescope::physics::forces::{self, ForceScratch};
use noblescope::physics::geometry::separation;
use noblescope::physics::neighbours::NeighbourList;
use noblescope::physics::potential::PairTable;
use proptest::prelude::*;
use std::collections::BTreeSet;

/// One random configuration.
#[derive(Clone, Debug)]
struct Config {
    box_length: f64,
    cutoff: f64,
    skin: f64,
    positions: Vec<[f64; 3]>,
    types: Vec<u8>,
    mode: PotentialMode,
}

/// Positions as fractions of the box in [-2, 3): unwrapped coordinates up to two box lengths
/// outside the primary box. One in eight coordinates is snapped to a multiple of L / 12 (a cell
/// or slab boundary for many of the cell counts drawn, and the box faces 0 and L themselves).
fn coordinate() -> impl Strategy<Value = f64> {
    prop_oneof![
        7 => -2.0f64..3.0,
        1 => (-24i32..36).prop_map(|k| k as f64 / 12.0),
    ]
}

fn config(max_atoms: usize, species: u8) -> impl Strategy<Value = Config> {
    (
        2usize..max_atoms,
        3.0f64..24.0,
        // Box edge / (cutoff + skin), from exactly 2 (the largest reach allowed) to 9: below 3 the
        // list is built by the O(N²) path, at 3 and above by cells. From 9 to 80 the box is
        // dilute for the atom count drawn (down to ρ (r_c + skin)³ ≈ 4e-6), so the cell grid is
        // capped at two cells an atom and its cells are wider than the reach.
        prop_oneof![
            2.0f64..9.0,
            Just(2.0),
            Just(3.0),
            Just(4.0),
            Just(6.0),
            9.0f64..80.0
        ],
        // Fraction of the reach that is cutoff (the rest is skin), down to a zero skin.
        prop_oneof![0.5f64..1.0, Just(1.0)],
        prop::sample::select(PotentialMode::ALL.to_vec()),
    )
        .prop_flat_map(move |(n, l, per_reach, cut_frac, mode)| {
            let reach = l / per_reach;
            let cutoff = reach * cut_frac;
            let skin = reach - cutoff;
            (
                prop::collection::vec([coordinate(), coordinate(), coordinate()], n),
                prop::collection::vec(0u8..species, n),
            )
                .prop_map(move |(frac, types)| Config {
                    box_length: l,
                    cutoff,
                    skin,
                    positions: frac.iter().map(|f| [f[0] * l, f[1] * l, f[2] * l]).collect(),
                    types,
                    mode,
                })
        })
}

/// Pairs (i < j) within `reach` by minimum image, by looking at every pair.
fn brute_pairs(pos: &[[f64; 3]], l: f64, reach: f64) -> BTreeSet<(u32, u32)> {
    let mut set = BTreeSet::new();
    for i in 0..pos.len() {
        for j in i + 1..pos.len() {
            if separation(&pos[i], &pos[j], l, 1.0 / l).1 < reach * reach {
                set.insert((i as u32, j as u32));
            }
        }
    }
    set
}

/// Largest distance beyond the reach at which the list may hold a pair (see the module doc).
fn allowed_margin(l: f64) -> f64 {
    2.0 * (1e-4 + 1e-6 * l)
}

/// Checks the list's pair set against the all-pairs one under the contract in the module doc.
fn check_pair_set(
    got: &BTreeSet<(u32, u32)>,
    pos: &[[f64; 3]],
    l: f64,
    reach: f64,
) -> Result<(), TestCaseError> {
    let want = brute_pairs(pos, l, reach);
    let missing: Vec<_> = want.difference(got).take(5).collect();
    prop_assert!(
        missing.is_empty(),
        "pairs within r_c + skin missing from the list: {:?} (of {} pairs)",
        missing,
        want.len()
    );
    let cells = (l / reach).floor() as usize;
    let beyond = reach + allowed_margin(l);
    for &(i, j) in got.difference(&want) {
        let r = separation(&pos[i as usize], &pos[j as usize], l, 1.0 / l)
            .1
            .sqrt();
        prop_assert!(
            r < beyond,
            "pair ({}, {}) at r = {} listed; reach {}, {} cells per edge, limit {}",
            i,
            j,
            r,
            reach,
            cells,
            beyond
        );
    }
    Ok(())
}

fn list_pairs(list: &NeighbourList, n: usize) -> Result<BTreeSet<(u32, u32)>, TestCaseError> {
    let mut set = BTreeSet::new();
    for i in 0..n {
        for &j in list.partners(i) {
            prop_assert!(j as usize != i, "atom {} lists itself", i);
            prop_assert!((j as usize) < n, "partner {} out of range", j);
            let key = (i.min(j as usize) as u32, i.max(j as usize) as u32);
            prop_assert!(set.insert(key), "pair {:?} stored twice", key);
        }
    }
    prop_assert_eq!(set.len(), list.pairs());
    Ok(set)
}

fn table(c: &Config, species: usize) -> PairTable {
    // Two species with different ε and σ (Lorentz–Berthelot mixing in the table); values are
    // arbitrary test parameters, not a real mixture.
    let (eps, sig): (Vec<f64>, Vec<f64>) = if species == 1 {
        (vec![1.0], vec![1.0])
    } else {
        (vec![1.0, 1.7], vec![1.0, 1.25])
    };
    PairTable::lorentz_berthelot(&eps, &sig, c.cutoff, c.mode)
}

/// Checks forces, energy and virial of `forces::compute` against `forces::brute_force`.
fn check_forces(c: &Config, species: usize) -> Result<(), TestCaseError> {
    let n = c.positions.len();
    let l = c.box_length;
    let t = table(c, species);
    let mut list = NeighbourList::new(c.cutoff, c.skin);
    list.build(&c.positions, l);
    let mut f = vec![[f64::NAN; 3]; n];
    let mut scratch = ForceScratch::default();
    let sums = forces::compute(&c.positions, &c.types, l, &t, &list, &mut f, &mut scratch);
    let (f_ref, sums_ref) = forces::brute_force(&c.positions, &c.types, l, &t);

    // Magnitude sums for the error bounds.
    let mut mag = vec![[0.0f64; 3]; n];
    let (mut e_mag, mut w_mag) = (0.0f64, 0.0f64);
    for i in 0..n {
        for j in i + 1..n {
            let (d, r2) = separation(&c.positions[i], &c.positions[j], l, 1.0 / l);
            if r2 >= t.cutoff2() {
                continue;
            }
            // Coinciding atoms (possible with snapped coordinates) have no finite force.
            prop_assume!(r2 > 1e-4);
            let (e, f_over_r) = t.evaluate(c.types[i] as usize, c.types[j] as usize, r2);
            e_mag += e.abs();
            w_mag += (f_over_r * r2).abs();
            for k in 0..3 {
                mag[i][k] += (f_over_r * d[k]).abs();
                mag[j][k] += (f_over_r * d[k]).abs();
            }
        }
    }
    let tol = 1e-10;
    prop_assert!(
        (sums.potential - sums_ref.potential).abs() <= tol * e_mag,
        "energy {} vs {} (Σ|e| {})",
        sums.potential,
        sums_ref.potential,
        e_mag
    );
    prop_assert!(
        (sums.virial - sums_ref.virial).abs() <= tol * w_mag,
        "virial {} vs {} (Σ|w| {})",
        sums.virial,
        sums_ref.virial,
        w_mag
    );
    for i in 0..n {
        for k in 0..3 {
            prop_assert!(
                (f[i][k] - f_ref[i][k]).abs() <= tol * mag[i][k],
                "force on atom {} component {}: {} vs {} (Σ|f| {})",
                i,
                k,
                f[i][k],
                f_ref[i][k],
                mag[i][k]
            );
        }
    }
    Ok(())
}

/// The slab schedule: every atom in exactly one slab, the slab count 1 or a multiple of 3, and
/// every stored pair within the owner's slab or the slab next to it (what makes the three-phase
/// force loop race-free, per the module doc of `physics::neighbours`).
fn check_slabs(list: &NeighbourList, n: usize) -> Result<(), TestCaseError> {
    let slabs = list.slabs();
    prop_assert!(
        slabs == 1 || (slabs >= 3 && slabs.is_multiple_of(3)),
        "{} slabs",
        slabs
    );
    let mut slab_of = vec![usize::MAX; n];
    for s in 0..slabs {
        for &i in list.slab(s) {
            prop_assert_eq!(slab_of[i as usize], usize::MAX, "atom {} in two slabs", i);
            slab_of[i as usize] = s;
        }
    }
    prop_assert!(slab_of.iter().all(|&s| s != usize::MAX), "an atom is in no slab");
    if slabs >= 3 {
        for i in 0..n {
            for &j in list.partners(i) {
                let d = (slab_of[i] + slabs - slab_of[j as usize]) % slabs;
                prop_assert!(
                    d == 0 || d == 1 || d == slabs - 1,
                    "pair ({}, {}) spans slabs {} and {}",
                    i,
                    j,
                    slab_of[i],
                    slab_of[j as usize]
                );
            }
        }
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 160, ..ProptestConfig::default() })]

    #[test]
    fn verlet_list_holds_every_pair_within_reach_once(c in config(400, 1)) {
        let n = c.positions.len();
        let mut list = NeighbourList::new(c.cutoff, c.skin);
        list.build(&c.positions, c.box_length);
        let got = list_pairs(&list, n)?;
        check_pair_set(&got, &c.positions, c.box_length, c.cutoff + c.skin)?;
        check_slabs(&list, n)?;
    }

    #[test]
    fn rebuilt_list_is_the_list_of_the_new_positions(a in config(300, 1), shift in prop::collection::vec(-0.5f64..0.5, 3)) {
        // Rebuilding one list object (scratch reused) must give the same result as a fresh one.
        let l = a.box_length;
        let mut list = NeighbourList::new(a.cutoff, a.skin);
        list.build(&a.positions, l);
        let moved: Vec<[f64; 3]> = a.positions.iter().enumerate()
            .map(|(i, p)| { let s = if i % 2 == 0 { shift[0] } else { shift[1] }; [p[0] + s * l, p[1] - shift[2] * l, p[2] + s]})
            .collect();
        list.build(&moved, l);
        let got = list_pairs(&list, moved.len())?;
        check_pair_set(&got, &moved, l, a.cutoff + a.skin)?;
        // A fresh list on the moved positions holds the same pairs.
        let mut fresh = NeighbourList::new(a.cutoff, a.skin);
        fresh.build(&moved, l);
        prop_assert_eq!(&got, &list_pairs(&fresh, moved.len())?);
        prop_assert_eq!(list.builds(), 2);
    }

    #[test]
    fn list_forces_equal_all_pairs_forces_one_species(c in config(400, 1)) {
        check_forces(&c, 1)?;
    }

    #[test]
    fn list_forces_equal_all_pairs_forces_two_species(c in config(400, 2)) {
        check_forces(&c, 2)?;
    }
}

/// A dense case with many cells and slabs that the random boxes above rarely reach.
#[test]
fn large_box_with_many_cells_and_slabs() {
    // Deterministic pseudo-random positions (a 64-bit LCG, Knuth MMIX constants): invented data.
    let mut s: u64 = 0x9E37_79B9_7F4A_7C15;
    let mut u = || {
        s = s
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (s >> 11) as f64 / (1u64 << 53) as f64
    };
    let (n, l, rc, skin) = (3000usize, 16.0, 2.5, 0.3);
    let positions: Vec<[f64; 3]> = (0..n)
        .map(|_| [u() * 3.0 * l - l, u() * l, u() * l + 5.0 * l])
        .collect();
    let types: Vec<u8> = (0..n).map(|i| (i % 3 == 0) as u8).collect();
    let mut list = NeighbourList::new(rc, skin);
    list.build(&positions, l);
    assert!(list.slabs() >= 3, "{} slabs", list.slabs());
    let got = list_pairs(&list, n).unwrap();
    check_pair_set(&got, &positions, l, rc + skin).unwrap();
    check_slabs(&list, n).unwrap();
    let c = Config {
        box_length: l,
        cutoff: rc,
        skin,
        positions,
        types,
        mode: PotentialMode::ShiftedForce,
    };
    check_forces(&c, 2).unwrap();
}

#[test]
fn a_pair_just_beyond_the_reach_never_spans_two_slabs_of_one_phase() {
    // Six slabs barely thicker than the reach (by 1e-7 of it): a pair a little longer than the
    // reach, within the search's margin, from the top of slab 0 to the bottom of slab 2. Slabs
    // 0 and 3 run in the same phase; had the pair been listed across two slab boundaries, both
    // would write atoms of slab 1 or 2 at once (slabs are sized by the reach plus the margin).
    let (rc, skin) = (2.5, 0.3);
    let reach = rc + skin;
    let l = 6.0 * reach * (1.0 + 1e-7);
    let slab = l / 6.0;
    let z0 = slab - 1e-6;
    let positions = vec![
        [1.0, 1.0, z0],
        [1.0, 1.0, z0 + reach + 4e-5],
        [5.0, 5.0, 4.0 * slab + 1.0],
    ];
    let mut list = NeighbourList::new(rc, skin);
    list.build(&positions, l);
    check_slabs(&list, positions.len()).unwrap();
}
