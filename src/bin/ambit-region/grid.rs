//! The block lattice: coarse cells refined as quadtrees, the shared block
//! sides, and the nodes above and below the coarse cells that tracts use.

use crate::{
    layout::Layout,
    random::{hash, mix, q7, signed, unit, Rng, TAG_CORNER, TAG_HEAVY, TAG_SIDE},
    shapes::ragged,
};

/// Levels of refinement below a coarse (rural) cell: an urban block can be
/// 1/4^LMAX of a rural one.
pub const LMAX: u32 = 4;
/// Finest lattice units per coarse cell side.
pub const FINE: i64 = 1 << LMAX;
/// Blocks at this level or finer are urban.
pub const URBAN_LEVEL: u32 = 2;
/// Segments per atomic side: four sides give 40 vertices per block.
pub const SIDE_SEGMENTS: usize = 10;
/// Corner jitter, fraction of the smallest adjacent block side.
pub const CORNER_JITTER: f64 = 0.15;
/// Side meander, fraction of the side length.
pub const SIDE_MEANDER: f64 = 0.06;

/// One block: a leaf of the quadtree under a coarse cell. `x`, `y` are its
/// south-west corner in finest lattice units; its side is `FINE >> level`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Leaf {
    pub level: u32,
    pub x: i64,
    pub y: i64,
}

impl Leaf {
    pub fn size(self) -> i64 {
        FINE >> self.level
    }
}

/// A lattice point, finest units.
pub type Pt = (i64, i64);

/// Bit offset of level `l` in a refinement mask: (4^l - 1) / 3.
pub fn level_offset(l: u32) -> u32 {
    ((1u32 << (2 * l)) - 1) / 3
}

/// Coarse cells over the box: which county each belongs to (0 = sea) and
/// how each is refined into blocks.
pub struct Grid<'a> {
    pub lay: &'a Layout,
    pub seed: u64,
    pub nx: i64,
    pub ny: i64,
    pub w: i64,
    pub h: i64,
    pub dlon: f64,
    pub dlat: f64,
    pub county: Vec<u8>,
    /// Bit `level_offset(l) + ly * 2^l + lx` set: the level-`l` node at
    /// (lx, ly) in the coarse cell is split into four.
    pub refine: Vec<u128>,
}

impl<'a> Grid<'a> {
    pub fn new(lay: &'a Layout, seed: u64, nx: i64, ny: i64) -> Grid<'a> {
        let (w, h) = (nx * FINE, ny * FINE);
        let mut g = Grid {
            lay,
            seed,
            nx,
            ny,
            w,
            h,
            dlon: (lay.lon_east - lay.lon_west) / w as f64,
            dlat: (lay.lat_north - lay.lat_south) / h as f64,
            county: vec![0; (nx * ny) as usize],
            refine: vec![0; (nx * ny) as usize],
        };
        for cy in 0..ny {
            for cx in 0..nx {
                let (lon, lat) = g.lonlat((cx * FINE) as f64 + 8.0, (cy * FINE) as f64 + 8.0);
                let land = cx >= 1 && lay.is_land(lon, lat);
                if !land {
                    continue;
                }
                let i = (cy * nx + cx) as usize;
                g.county[i] = 1 + lay.nearest_county(lon, lat) as u8;
                g.refine[i] = g.mask(cx, cy, 0, 0, 0);
            }
        }
        g
    }

    /// Refinement bits of the subtree of node (lx, ly) at `level` in coarse
    /// cell (cx, cy): a node splits when the density at its centre exceeds
    /// 2 * 4^level, i.e. when log4(density) > level + 1/2.
    pub fn mask(&self, cx: i64, cy: i64, level: u32, lx: i64, ly: i64) -> u128 {
        if level >= LMAX {
            return 0;
        }
        let size = FINE >> level;
        let half = size as f64 / 2.0;
        let (lon, lat) = self.lonlat(
            (cx * FINE + lx * size) as f64 + half,
            (cy * FINE + ly * size) as f64 + half,
        );
        if self.lay.density(lon, lat) <= 2.0 * 4f64.powi(level as i32) {
            return 0;
        }
        let bit = level_offset(level) + (ly as u32) * (1 << level) + lx as u32;
        let mut m = 1u128 << bit;
        for (i, j) in [(0, 0), (1, 0), (0, 1), (1, 1)] {
            m |= self.mask(cx, cy, level + 1, 2 * lx + i, 2 * ly + j);
        }
        m
    }

    /// Longitude and latitude of a point in (fractional) lattice units.
    pub fn lonlat(&self, fx: f64, fy: f64) -> (f64, f64) {
        (
            self.lay.lon_west + fx * self.dlon,
            self.lay.lat_south + fy * self.dlat,
        )
    }

    pub fn cell_index(&self, fx: i64, fy: i64) -> Option<usize> {
        if fx < 0 || fy < 0 || fx >= self.w || fy >= self.h {
            return None;
        }
        let i = ((fy >> LMAX) * self.nx + (fx >> LMAX)) as usize;
        (self.county[i] != 0).then_some(i)
    }

    pub fn refined(&self, cell: usize, level: u32, fx: i64, fy: i64) -> bool {
        let s = LMAX - level;
        let (lx, ly) = ((fx & (FINE - 1)) >> s, (fy & (FINE - 1)) >> s);
        let bit = level_offset(level) + (ly as u32) * (1 << level) + lx as u32;
        self.refine[cell] >> bit & 1 == 1
    }

    /// The block holding the finest cell (fx, fy), if it is land.
    pub fn leaf_at(&self, fx: i64, fy: i64) -> Option<Leaf> {
        let cell = self.cell_index(fx, fy)?;
        let mut level = 0;
        while level < LMAX && self.refined(cell, level, fx, fy) {
            level += 1;
        }
        let size = FINE >> level;
        Some(Leaf {
            level,
            x: fx & !(size - 1),
            y: fy & !(size - 1),
        })
    }

    /// 1-based county of a land position, 0 for sea or outside.
    pub fn county_at(&self, fx: i64, fy: i64) -> u8 {
        self.cell_index(fx, fy).map_or(0, |i| self.county[i])
    }

    /// Whether the aligned level-`level` cell with south-west corner (x, y)
    /// is split into smaller blocks.
    pub fn subdivided(&self, level: u32, x: i64, y: i64) -> bool {
        self.leaf_at(x, y).is_some_and(|l| l.level > level)
    }

    pub fn leaf_center(&self, leaf: Leaf) -> (f64, f64) {
        let half = leaf.size() as f64 / 2.0;
        self.lonlat(leaf.x as f64 + half, leaf.y as f64 + half)
    }

    pub fn urban_core(&self, leaf: Leaf) -> Option<usize> {
        (leaf.level >= URBAN_LEVEL).then(|| {
            let (lon, lat) = self.leaf_center(leaf);
            self.lay.nearest_core(lon, lat)
        })
    }

    /// A lattice corner moved by a random fraction of the smallest block
    /// touching it, in lattice units. Corners on the box stay on it, so the
    /// state lines are straight.
    pub fn corner(&self, p: Pt) -> (f64, f64) {
        let (x, y) = p;
        let mut level = 0;
        for (dx, dy) in [(-1, -1), (0, -1), (-1, 0), (0, 0)] {
            if let Some(l) = self.leaf_at(x + dx, y + dy) {
                level = level.max(l.level);
            }
        }
        let amp = CORNER_JITTER * (FINE >> level) as f64;
        let r = hash(self.seed, TAG_CORNER, x, y, 0);
        let jx = if x == 0 || x == self.w {
            0.0
        } else {
            amp * signed(r)
        };
        let jy = if y == 0 || y == self.h {
            0.0
        } else {
            amp * signed(mix(r))
        };
        (x as f64 + jx, y as f64 + jy)
    }

    /// Quantized longitude and latitude of lattice coordinates.
    pub fn vertex(&self, fx: f64, fy: f64) -> [f64; 2] {
        let (lon, lat) = self.lonlat(fx, fy);
        [q7(lon), q7(lat)]
    }

    /// The vertices of the atomic side from `p` to `q` (both lattice
    /// corners), ends included, in the direction p -> q. The polyline is
    /// computed in one canonical direction and reversed when needed, so the
    /// two blocks along a side get exactly the same vertices.
    pub fn side_vertices(&self, p: Pt, q: Pt) -> Vec<[f64; 2]> {
        let (a, b) = if p <= q { (p, q) } else { (q, p) };
        let horizontal = a.1 == b.1;
        let on_box = if horizontal {
            a.1 == 0 || a.1 == self.h
        } else {
            a.0 == 0 || a.0 == self.w
        };
        let (ax, ay) = self.corner(a);
        let (bx, by) = self.corner(b);
        let len = (b.0 - a.0) + (b.1 - a.1);
        let r = hash(self.seed, TAG_SIDE, a.0 * 2 + horizontal as i64, a.1, len);
        let c = [signed(r), signed(mix(r)), signed(mix(mix(r)))];
        let segments = self.segments(a, horizontal, len, on_box);
        // A heavy side also carries small ragged detail (at most 2% of the
        // side), still a graph over the chord, so the side stays simple.
        let detail = (segments > SIDE_SEGMENTS).then(|| {
            let mut rr = Rng(mix(r ^ TAG_HEAVY));
            ragged(&mut rr, segments, -0.02, 0.02)
        });
        let mut out = Vec::with_capacity(segments + 1);
        out.push(self.vertex(ax, ay));
        for k in 1..segments {
            let t = k as f64 / segments as f64;
            let u = 2.0 * t - 1.0;
            // A smooth bump, zero at both ends, at most 1 in size.
            let f = if on_box {
                0.0
            } else {
                4.0 * t * (1.0 - t) * (c[0] + c[1] * u + c[2] * (u * u - 1.0 / 3.0)) / (8.0 / 3.0)
            };
            let (dx, dy) = (bx - ax, by - ay);
            let mut off = SIDE_MEANDER * f;
            if let Some(d) = &detail {
                off += 4.0 * t * (1.0 - t) * d[k];
            }
            out.push(self.vertex(ax + t * dx - off * dy, ay + t * dy + off * dx));
        }
        out.push(self.vertex(bx, by));
        if (a, b) != (p, q) {
            out.reverse();
        }
        out
    }

    /// Segments of the atomic side from lattice corner `a` (the smaller
    /// end) of length `len`: SIDE_SEGMENTS, or for a full coarse side
    /// chosen with the layout's `heavy_sides` chance 512, 1024 or 2048.
    pub fn segments(&self, a: Pt, horizontal: bool, len: i64, on_box: bool) -> usize {
        if self.lay.heavy_sides <= 0.0 || on_box || len != FINE {
            return SIDE_SEGMENTS;
        }
        let h = hash(self.seed, TAG_HEAVY, a.0 * 2 + horizontal as i64, a.1, len);
        if unit(h) < self.lay.heavy_sides {
            512 << (mix(h) % 3)
        } else {
            SIDE_SEGMENTS
        }
    }

    /// The atomic sides of the side from `p` to `q` at `level`: a side is
    /// split in two when the block on either side of it is split.
    pub fn split_side(&self, level: u32, p: Pt, q: Pt, out: &mut Vec<(Pt, Pt)>) {
        let s = FINE >> level;
        let (x0, y0) = (p.0.min(q.0), p.1.min(q.1));
        let split = level < LMAX
            && if p.1 == q.1 {
                self.subdivided(level, x0, y0 - s) || self.subdivided(level, x0, y0)
            } else {
                self.subdivided(level, x0 - s, y0) || self.subdivided(level, x0, y0)
            };
        if split {
            let m = ((p.0 + q.0) / 2, (p.1 + q.1) / 2);
            self.split_side(level + 1, p, m, out);
            self.split_side(level + 1, m, q, out);
        } else {
            out.push((p, q));
        }
    }

    /// The atomic sides of a block, counter-clockwise from its south-west
    /// corner.
    pub fn block_sides(&self, leaf: Leaf) -> Vec<(Pt, Pt)> {
        let s = leaf.size();
        let (x, y) = (leaf.x, leaf.y);
        let corners = [(x, y), (x + s, y), (x + s, y + s), (x, y + s)];
        let mut out = Vec::with_capacity(8);
        for i in 0..4 {
            self.split_side(leaf.level, corners[i], corners[(i + 1) % 4], &mut out);
        }
        out
    }

    /// A finest cell just to the right of the side p -> q (outside a block
    /// that runs counter-clockwise).
    pub fn right_of(p: Pt, q: Pt) -> Pt {
        let (x0, y0) = (p.0.min(q.0), p.1.min(q.1));
        match (q.0 - p.0).signum() + 2 * (q.1 - p.1).signum() {
            1 => (x0, y0 - 1),  // eastwards: below
            -1 => (x0, y0),     // westwards: above
            2 => (p.0, y0),     // northwards: east
            _ => (p.0 - 1, y0), // southwards: west
        }
    }

    pub fn count_leaves(&self) -> usize {
        fn rec(m: u128, level: u32, lx: u32, ly: u32) -> usize {
            if level >= LMAX {
                return 1;
            }
            let bit = level_offset(level) + ly * (1 << level) + lx;
            if m >> bit & 1 == 0 {
                return 1;
            }
            [(0, 0), (1, 0), (0, 1), (1, 1)]
                .iter()
                .map(|&(i, j)| rec(m, level + 1, 2 * lx + i, 2 * ly + j))
                .sum()
        }
        self.county
            .iter()
            .zip(&self.refine)
            .filter(|(c, _)| **c != 0)
            .map(|(_, &m)| rec(m, 0, 0, 0))
            .sum()
    }
}

/// The grid whose block count is nearest `target`: the coarse cell size is
/// scaled by the square root of the miss a few times.
pub fn calibrate(lay: &Layout, seed: u64, target: usize) -> Grid<'_> {
    let width_km = (lay.lon_east - lay.lon_west) * lay.km_lon;
    let height_km = (lay.lat_north - lay.lat_south) * lay.km_lat;
    // First guess: about 3 blocks per coarse cell over the land (55,000
    // km^2 in the demo).
    let mut cell_km = (3.0 * lay.land_km2 / target as f64).sqrt();
    let mut best: Option<(usize, Grid<'_>)> = None;
    for _ in 0..5 {
        let nx = ((width_km / cell_km).round() as i64).max(8);
        let ny = ((height_km / cell_km).round() as i64).max(8);
        let g = Grid::new(lay, seed, nx, ny);
        let n = g.count_leaves();
        let miss = n.abs_diff(target);
        cell_km *= (n as f64 / target as f64).sqrt();
        if best.as_ref().is_none_or(|(m, _)| miss < *m) {
            best = Some((miss, g));
        }
        if miss * 200 < target {
            break;
        }
    }
    best.expect("at least one grid").1
}

// ----------------------------------------------------------------------
// Tracts: nodes of the lattice above and below the coarse cells
// ----------------------------------------------------------------------

/// A node of the lattice hierarchy: level < 0 groups 2^-level x 2^-level
/// coarse cells, level 0 is a coarse cell, level > 0 a quadtree node in one.
#[derive(Clone, Copy)]
pub struct Node {
    pub level: i32,
    pub x: i64,
    pub y: i64,
}

/// Tracts start as 8 x 8 coarse cells.
pub const TRACT_TOP: i32 = -3;
/// A tract splits above this population or block count.
pub const TRACT_MAX_POP: u64 = 8000;
pub const TRACT_MAX_BLOCKS: usize = 900;

impl Node {
    pub fn size(self) -> i64 {
        if self.level >= 0 {
            FINE >> self.level
        } else {
            FINE << -self.level
        }
    }

    pub fn children(self) -> [Node; 4] {
        let h = self.size() / 2;
        [(0, 0), (1, 0), (0, 1), (1, 1)].map(|(i, j)| Node {
            level: self.level + 1,
            x: self.x + i * h,
            y: self.y + j * h,
        })
    }
}

impl Grid<'_> {
    /// Whether the node is split in the block quadtree (always above the
    /// coarse cells).
    pub fn node_split(&self, n: Node) -> bool {
        if n.level < 0 {
            return true;
        }
        let level = n.level as u32;
        level < LMAX
            && self
                .cell_index(n.x, n.y)
                .is_some_and(|c| self.refined(c, level, n.x, n.y))
    }

    /// The blocks of `county` (1-based) under node `n`, in Z order.
    pub fn leaves(&self, n: Node, county: u8, out: &mut Vec<Leaf>) {
        if n.x >= self.w || n.y >= self.h {
            return;
        }
        if n.level >= 0 && self.county_at(n.x, n.y) != county {
            return;
        }
        if self.node_split(n) {
            for c in n.children() {
                self.leaves(c, county, out);
            }
        } else {
            out.push(Leaf {
                level: n.level as u32,
                x: n.x,
                y: n.y,
            });
        }
    }
}
