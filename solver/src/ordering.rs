//! Coordinate nested dissection: a fill-reducing elimination order from the
//! sparsity pattern and one point per unknown.
//!
//! The unknowns are split recursively by a straight cut: along x, y and the
//! two diagonals, every position between 30 % and 70 % of the piece (in
//! slabs of equal width) is scored by its vertex separator, and the
//! shortest wins. The separator is the unknowns of one side that have a
//! graph neighbour on the other side (the smaller such side boundary), so
//! it really separates whatever the points are: they only steer the choice.
//! Both sides are ordered first, the separator last (George, "Nested
//! dissection of a regular finite element mesh", SIAM J. Numer. Anal. 10
//! (1973) 345–363; cutting by coordinates as in Gilbert, Miller & Teng,
//! "Geometric mesh partitioning", SIAM J. Sci. Comput. 19 (1998) 2091–2110,
//! here with straight cuts only). The sides of large pieces are ordered in
//! parallel; the result does not depend on the threads.
//!
//! Measured on the P1 gapped core (benches/README.md): the factor needs
//! 0.6–0.8 of the flops of approximate minimum degree and about 1.6 times
//! those of METIS's multilevel nested dissection, at a tenth of METIS's
//! ordering time.

use crate::assembly::SparsityPattern;
use crate::linear::LinearError;
use std::sync::atomic::Ordering::Relaxed;
use std::sync::atomic::{AtomicU32, AtomicU64};

/// Pieces of at most this many unknowns are not split further (their Z-order
/// is kept). On the 100k P1 gapped core, leaves of 8/32/128 gave 4.5/4.9/5.7
/// M factor entries and 0.64/0.66/0.71 Gflop; smaller leaves cost ordering
/// time.
const LEAF: usize = 32;

/// Cut directions tried at every split: x, y and the two diagonals; the
/// shortest separator wins.
const DIRECTIONS: [[f64; 2]; 4] = [[1.0, 0.0], [0.0, 1.0], [H, H], [H, -H]];
const H: f64 = std::f64::consts::FRAC_1_SQRT_2;
const DIRS: usize = DIRECTIONS.len();

/// A cut may leave between this fraction and its complement of a piece on
/// its lower side: it is placed where the separator is shortest within
/// that window, not just at the median (a cut through coarse elements is
/// shorter).
const BALANCE: f64 = 0.3;

/// Most cut positions tried along a direction: the piece's extent is cut
/// into this many equal slabs (fewer for small pieces), and cuts fall
/// between slabs.
const SLABS: usize = 4096;

/// A nested-dissection elimination order of the symmetric matrix whose
/// upper triangle has the pattern `pattern`, steered by `points[i]`, the
/// position of unknown i: `order[k]` is the unknown eliminated k-th.
///
/// Any points, even non-finite ones, give a valid permutation; points that
/// follow the graph (neighbours close together) give short separators.
pub fn coordinate_dissection(
    pattern: &SparsityPattern,
    points: &[[f64; 2]],
) -> Result<Vec<usize>, LinearError> {
    let n = pattern.n;
    if points.len() != n {
        return Err(LinearError::Size {
            expected: n,
            got: points.len(),
        });
    }
    // Work on the unknowns renumbered along a Z-order curve, so that
    // neighbours in the mesh are mostly neighbours in memory.
    let spatial = z_order(points);
    let mut relabel = vec![0u32; n];
    for (new, &old) in spatial.iter().enumerate() {
        relabel[old as usize] = new as u32;
    }
    let graph = Graph::from_upper(pattern, &relabel);
    let shared = Shared {
        graph,
        grid: grid_coordinates(&spatial, points),
        slab: (0..n).map(|_| AtomicU64::new(0)).collect(),
        stamp: (0..n).map(|_| AtomicU32::new(0)).collect(),
        next_stamp: AtomicU32::new(1),
    };
    let mut order: Vec<u32> = (0..n as u32).collect();
    shared.dissect(&mut Scratch::new(), &mut order);
    Ok(order
        .iter()
        .map(|&v| spatial[v as usize] as usize)
        .collect())
}

/// One slab number per direction, in 16-bit lanes of a word (slab numbers
/// stay below 2¹⁵, leaving each lane's top bit free for [`lanes_min`]).
type Lanes = u64;
const LANE_BITS: u32 = 16;
const LANE_TOPS: Lanes = 0x8000_8000_8000_8000;

/// Lane `d` of `x`.
fn lane(x: Lanes, d: usize) -> usize {
    ((x >> (LANE_BITS * d as u32)) & 0xffff) as usize
}

/// The lane-wise minimum of two words of 15-bit lanes: (a + 2¹⁵) − b keeps
/// its lane's top bit exactly when a ≥ b, and never borrows across lanes
/// (Warren, Hacker's Delight, 2nd ed., §2-18, "SIMD within a register").
fn lanes_min(a: Lanes, b: Lanes) -> Lanes {
    let a_not_less = (((a | LANE_TOPS) - b) & LANE_TOPS) >> (LANE_BITS - 1);
    let mask = a_not_less * 0xffff;
    (b & mask) | (a & !mask)
}

/// Grid resolution of [`grid_coordinates`]: 2²⁴ steps across the points.
const GRID_BITS: u32 = 24;

/// For each unknown `spatial[i]`, its coordinate along each of
/// [`DIRECTIONS`] mapped linearly onto 0..2²⁴ over the finite points
/// (non-finite ones map to 0).
fn grid_coordinates(spatial: &[u32], points: &[[f64; 2]]) -> Vec<[u32; DIRS]> {
    let key = |p: [f64; 2], d: usize| DIRECTIONS[d][0] * p[0] + DIRECTIONS[d][1] * p[1];
    let (mut lo, mut hi) = ([f64::INFINITY; DIRS], [f64::NEG_INFINITY; DIRS]);
    for &p in points {
        for d in 0..DIRS {
            let k = key(p, d);
            if k.is_finite() {
                lo[d] = lo[d].min(k);
                hi[d] = hi[d].max(k);
            }
        }
    }
    let top = ((1u32 << GRID_BITS) - 1) as f64;
    spatial
        .iter()
        .map(|&old| {
            let p = points[old as usize];
            // `as` saturates and sends NaN to 0.
            std::array::from_fn(|d| ((key(p, d) - lo[d]) / (hi[d] - lo[d]) * top) as u32)
        })
        .collect()
}

/// The unknowns sorted along a Z-order (Morton) curve through the bounding
/// box of the finite points, 16 bits a coordinate (non-finite points go
/// first).
fn z_order(points: &[[f64; 2]]) -> Vec<u32> {
    let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    for p in points
        .iter()
        .filter(|p| p[0].is_finite() && p[1].is_finite())
    {
        for a in 0..2 {
            lo[a] = lo[a].min(p[a]);
            hi[a] = hi[a].max(p[a]);
        }
    }
    let spread = |x: u32| {
        // Bits b15..b0 to positions 2·b (Warren, Hacker's Delight, 2nd ed.,
        // §7-2 "outer perfect shuffle").
        let mut x = x & 0xffff;
        x = (x | (x << 8)) & 0x00ff_00ff;
        x = (x | (x << 4)) & 0x0f0f_0f0f;
        x = (x | (x << 2)) & 0x3333_3333;
        (x | (x << 1)) & 0x5555_5555
    };
    let mut keyed: Vec<(u32, u32)> = points
        .iter()
        .enumerate()
        .map(|(i, p)| {
            // `as` saturates, and sends NaN (non-finite points) to 0.
            let q = |a: usize| ((p[a] - lo[a]) / (hi[a] - lo[a]) * 65535.0) as u32;
            (spread(q(0)) | (spread(q(1)) << 1), i as u32)
        })
        .collect();
    keyed.sort_unstable();
    keyed.into_iter().map(|(_, i)| i).collect()
}

/// The symmetric adjacency (no diagonal) in compressed rows.
struct Graph {
    start: Vec<usize>,
    neighbours: Vec<u32>,
}

impl Graph {
    /// The graph of `pattern` with unknown i renamed `relabel[i]`.
    fn from_upper(pattern: &SparsityPattern, relabel: &[u32]) -> Graph {
        let n = pattern.n;
        let mut start = vec![0usize; n + 1];
        for col in 0..n {
            for &row in &pattern.row_idx[pattern.col_ptr[col]..pattern.col_ptr[col + 1]] {
                if row != col {
                    start[relabel[row] as usize + 1] += 1;
                    start[relabel[col] as usize + 1] += 1;
                }
            }
        }
        for v in 0..n {
            start[v + 1] += start[v];
        }
        let mut fill = start.clone();
        let mut neighbours = vec![0u32; start[n]];
        for col in 0..n {
            for &row in &pattern.row_idx[pattern.col_ptr[col]..pattern.col_ptr[col + 1]] {
                if row != col {
                    let (r, c) = (relabel[row], relabel[col]);
                    neighbours[fill[r as usize]] = c;
                    fill[r as usize] += 1;
                    neighbours[fill[c as usize]] = r;
                    fill[c as usize] += 1;
                }
            }
        }
        Graph { start, neighbours }
    }

    fn of(&self, v: u32) -> &[u32] {
        let v = v as usize;
        &self.neighbours[self.start[v]..self.start[v + 1]]
    }
}

/// Pieces larger than this are split while their halves are ordered in
/// parallel.
const PARALLEL_PIECE: usize = 20_000;

/// What the recursion shares; unknowns are numbered in Z-order. The
/// per-unknown arrays are atomics only so that disjoint pieces can be worked
/// on in parallel: a piece writes only its own unknowns' entries, and reads
/// a neighbour's slab only after seeing the piece's own stamp on it.
struct Shared {
    graph: Graph,
    /// Per unknown: its coordinate along each direction, as an integer.
    grid: Vec<[u32; DIRS]>,
    /// Per unknown: its slab along each direction in the current piece.
    slab: Vec<AtomicU64>,
    /// Per unknown: the piece (or part of a piece) it was last put in; fresh
    /// stamps each time, so nothing needs clearing.
    stamp: Vec<AtomicU32>,
    next_stamp: AtomicU32,
}

/// Work space of one thread of the recursion.
struct Scratch {
    /// Per slab and direction: unknowns in it, and the difference arrays of
    /// the lower and the upper side's boundary size of the cut below it.
    tally: Vec<[[i32; 3]; DIRS]>,
    /// Per position in the piece: the lowest and highest slab, per
    /// direction, among the unknown and its neighbours in the piece.
    reach: Vec<(Lanes, Lanes)>,
    /// The piece being laid out anew.
    out: Vec<u32>,
}

impl Scratch {
    fn new() -> Scratch {
        Scratch {
            tally: vec![[[0; 3]; DIRS]; SLABS + 2],
            reach: Vec::new(),
            out: Vec::new(),
        }
    }
}

/// How a piece is split.
enum Cut {
    /// The lower side is the slabs below `slab` along direction `dir`; the
    /// separator is the lower side's boundary when `separator_in_low`, else
    /// the upper side's.
    Slab {
        dir: usize,
        slab: usize,
        separator_in_low: bool,
    },
    /// No slab cut divides the piece (all points alike): the first half of
    /// the piece is the lower side, its boundary the separator.
    Halves,
}

impl Shared {
    fn fresh_stamp(&self) -> u32 {
        self.next_stamp.fetch_add(1, Relaxed)
    }

    fn stamp(&self, v: u32) -> u32 {
        self.stamp[v as usize].load(Relaxed)
    }

    fn set_stamp(&self, v: u32, stamp: u32) {
        self.stamp[v as usize].store(stamp, Relaxed);
    }

    /// Reorder `piece` in place into its elimination order.
    fn dissect(&self, scratch: &mut Scratch, piece: &mut [u32]) {
        let m = piece.len();
        if m <= LEAF {
            return;
        }
        let (low, high, separator) = (self.fresh_stamp(), self.fresh_stamp(), self.fresh_stamp());
        let (mut n_low, mut n_high) = (0, 0);
        match self.best_cut(scratch, piece) {
            Cut::Slab {
                dir: d,
                slab: c,
                separator_in_low,
            } => {
                for (&v, &(reach_low, reach_high)) in piece.iter().zip(&scratch.reach) {
                    let part = if lane(self.slab[v as usize].load(Relaxed), d) < c {
                        if separator_in_low && lane(reach_high, d) >= c {
                            separator
                        } else {
                            n_low += 1;
                            low
                        }
                    } else if !separator_in_low && lane(reach_low, d) < c {
                        separator
                    } else {
                        n_high += 1;
                        high
                    };
                    self.set_stamp(v, part);
                }
            }
            Cut::Halves => {
                let (first, second) = piece.split_at(m / 2);
                for &v in first {
                    self.set_stamp(v, low);
                }
                for &v in second {
                    self.set_stamp(v, high);
                }
                n_low = first.len();
                n_high = second.len();
                for &v in first {
                    if self.graph.of(v).iter().any(|&w| self.stamp(w) == high) {
                        self.set_stamp(v, separator);
                        n_low -= 1;
                    }
                }
            }
        }
        // Lay the piece out as [lower side | upper side | separator], each
        // in its old order.
        let out = &mut scratch.out;
        out.resize(m, 0);
        let mut next = [0, n_low, n_low + n_high];
        for &v in piece.iter() {
            let s = self.stamp(v);
            let part = usize::from(s != low) + usize::from(s == separator);
            out[next[part]] = v;
            next[part] += 1;
        }
        piece.copy_from_slice(&out[..m]);
        let (lower, rest) = piece.split_at_mut(n_low);
        let upper = &mut rest[..n_high];
        if n_low + n_high > PARALLEL_PIECE {
            rayon::join(
                || self.dissect(scratch, lower),
                || self.dissect(&mut Scratch::new(), upper),
            );
        } else {
            self.dissect(scratch, lower);
            self.dissect(scratch, upper);
        }
    }

    /// The slab cut of `piece` with the fewest separator unknowns over all
    /// directions and all positions within the balance window (or the most
    /// balanced one when none is in the window). Leaves each unknown's
    /// slabs in `self.slab` and its reach in `scratch.reach`.
    fn best_cut(&self, scratch: &mut Scratch, piece: &[u32]) -> Cut {
        let m = piece.len();
        let slabs = SLABS.min(m / 2).max(2);
        let (mut lo, mut hi) = ([u32::MAX; DIRS], [0; DIRS]);
        for &v in piece {
            let g = &self.grid[v as usize];
            for d in 0..DIRS {
                lo[d] = lo[d].min(g[d]);
                hi[d] = hi[d].max(g[d]);
            }
        }
        // slab = ⌊(g − lo)·slabs/(hi − lo + 1)⌋ < slabs, in fixed point
        // (g − lo < 2²⁴, slabs ≤ 2¹⁴: no overflow).
        let scale: [u64; DIRS] =
            std::array::from_fn(|d| ((slabs as u64) << 24) / (u64::from(hi[d] - lo[d]) + 1));
        let piece_stamp = self.fresh_stamp();
        let tally = &mut scratch.tally[..slabs + 2];
        tally.fill([[0; 3]; DIRS]);
        for &v in piece {
            let g = &self.grid[v as usize];
            let mut own: Lanes = 0;
            for d in 0..DIRS {
                let slab = (u64::from(g[d] - lo[d]) * scale[d]) >> 24;
                tally[slab as usize][d][0] += 1;
                own |= slab << (LANE_BITS * d as u32);
            }
            self.slab[v as usize].store(own, Relaxed);
            self.set_stamp(v, piece_stamp);
        }
        scratch.reach.clear();
        for &v in piece {
            let own = self.slab[v as usize].load(Relaxed);
            let (mut low, mut high) = (own, own);
            for &w in self.graph.of(v) {
                if self.stamp(w) == piece_stamp {
                    let s = self.slab[w as usize].load(Relaxed);
                    low = lanes_min(low, s);
                    high = lanes_min(s, high) ^ s ^ high;
                }
            }
            // v (slab s) is on the lower side's boundary of the cut below
            // slab c when s < c ≤ its highest neighbour slab, on the upper
            // side's when its lowest neighbour slab < c ≤ s.
            // d indexes the lanes and tally's second axis, not one slice.
            #[allow(clippy::needless_range_loop)]
            for d in 0..DIRS {
                let (s, l, h) = (lane(own, d), lane(low, d), lane(high, d));
                if h > s {
                    tally[s + 1][d][1] += 1;
                    tally[h + 1][d][1] -= 1;
                }
                if l < s {
                    tally[l + 1][d][2] += 1;
                    tally[s + 1][d][2] -= 1;
                }
            }
            scratch.reach.push((low, high));
        }
        let first = ((m as f64 * BALANCE).floor() as usize).max(1);
        let last = ((m as f64 * (1.0 - BALANCE)).ceil() as usize).min(m - 1);
        // (outside the window, separator size, distance from the median)
        let mut best: Option<((bool, usize, usize), Cut)> = None;
        #[allow(clippy::needless_range_loop)]
        for d in 0..DIRS {
            let (mut n_low, mut low_boundary, mut high_boundary) = (0usize, 0i32, 0i32);
            for c in 1..slabs {
                n_low += tally[c - 1][d][0] as usize;
                low_boundary += tally[c][d][1];
                high_boundary += tally[c][d][2];
                if n_low == 0 || n_low == m {
                    continue;
                }
                let off_centre = n_low.abs_diff(m / 2);
                let score = if (first..=last).contains(&n_low) {
                    (false, low_boundary.min(high_boundary) as usize, off_centre)
                } else {
                    (true, 0, off_centre)
                };
                if best.as_ref().is_none_or(|(b, _)| score < *b) {
                    best = Some((
                        score,
                        Cut::Slab {
                            dir: d,
                            slab: c,
                            separator_in_low: low_boundary <= high_boundary,
                        },
                    ));
                }
            }
        }
        best.map_or(Cut::Halves, |(_, cut)| cut)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_path_is_split_in_the_middle() {
        // The path 0-1-...-199 at points x = i: a middle unknown is the
        // top separator and is eliminated last; the order is a permutation.
        let n = 200;
        let mut col_ptr = vec![0];
        let mut row_idx = Vec::new();
        for c in 0..n {
            if c > 0 {
                row_idx.push(c - 1);
            }
            row_idx.push(c);
            col_ptr.push(row_idx.len());
        }
        let pattern = SparsityPattern {
            n,
            col_ptr,
            row_idx,
        };
        let points: Vec<[f64; 2]> = (0..n).map(|i| [i as f64, 0.0]).collect();
        let order = coordinate_dissection(&pattern, &points).unwrap();
        let mut sorted = order.clone();
        sorted.sort_unstable();
        assert_eq!(sorted, (0..n).collect::<Vec<_>>());
        assert!((n / 2 - 1..=n / 2).contains(&order[n - 1]), "{order:?}");
        assert!(matches!(
            coordinate_dissection(&pattern, &points[1..]),
            Err(LinearError::Size { .. })
        ));
    }
}
