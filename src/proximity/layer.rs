//! Layers: a set of features (parks, facilities, ...), each with its own
//! reach in metres and an id, indexed by an R*-tree of their boxes grown by
//! their reach; and the questions asked of them.
//!
//! A feature is within reach of a geometry `g` when the geodesic minimum
//! distance between them is at most the feature's reach (ties count as
//! within). The index holds, for every feature, the boxes of its elements'
//! bounding balls grown by its reach ([`crate::proximity::boxes::LonLatBox`], split at the
//! antimeridian and rounded outward): any feature within reach of `g` has a
//! box meeting `g`'s box, so the index never loses a candidate, and the
//! answer is decided by the exact test of [`mod@crate::proximity::distance`].
//! Results never depend on the order in which features were added.

use rayon::prelude::*;
use rstar::primitives::{GeomWithData, Rectangle};
use rstar::RTree;

use crate::error::GeomError;
use crate::geometry::Geometry;
use crate::interrupt::{Interrupt, Never};
use crate::memory;
use crate::proximity::balltree::{space_box, BallTree, TIGHT_FROM};
use crate::proximity::boxes::LonLatBox;
use crate::proximity::distance::{
    distance_within_interruptible, nearest_between, within, within_interruptible,
};
use crate::proximity::prepared::{f32_up, tree_bytes, wrap_delta, Prepared};
use crate::proximity::share::{coverage_share, ShareError};

/// Features indexed between two interrupt checks.
const CHECK_EVERY: usize = 4096;

/// Candidates decided between two interrupt checks: one exact decision
/// can take a millisecond far from a feature, and a check is a clock read.
const CHECK_CANDIDATES: usize = 16;

/// Features prepared together before the interrupt flag is read and
/// progress reported (a batch ends sooner once it holds
/// [`BATCH_VERTICES`] vertices).
const BATCH_FEATURES: usize = 4096;
const BATCH_VERTICES: usize = 1 << 20;

/// Half the circumference, metres: no two points are farther apart.
const MAX_SEPARATION: f64 = 20_004_000.0;

/// One feature of a layer.
#[derive(Clone, Debug)]
pub struct Feature {
    pub id: i64,
    /// Metres; 0 means touching or containing.
    pub reach: f64,
    pub geometry: Prepared,
}

impl Feature {
    /// Vertices in the stored geometry: its isolated points and the
    /// vertices of its lines and rings (a ring's closing vertex counted, as
    /// WKT and WKB write it; a vertex at a pole split in two where its
    /// edges arrive on different meridians counts twice). Counted, not
    /// stored, to keep a feature small.
    pub fn vertices(&self) -> usize {
        let g = &self.geometry;
        g.points.len() + g.chains().map(<[_]>::len).sum::<usize>()
    }

    /// The feature `id` with reach `reach` (metres) and geometry `g`,
    /// prepared; see [`Prepared::build`] for `stop` and the errors.
    pub fn build(
        id: i64,
        reach: f64,
        g: &Geometry,
        stop: &dyn Interrupt,
    ) -> Result<Feature, GeomError> {
        let mut geometry = Prepared::build(g, stop)?;
        geometry.add_ball_tree(stop)?;
        Ok(Feature {
            id,
            reach,
            geometry,
        })
    }

    /// Memory held by the feature, bytes (the sizes of its arrays and
    /// values; for ambit_layers).
    pub fn bytes(&self) -> usize {
        std::mem::size_of::<Feature>() - std::mem::size_of::<Prepared>() + self.geometry.bytes()
    }
}

/// An entry of the reach index: a feature's reach-grown box in degrees,
/// rounded outward to f32 ([`outward`]; 48 bytes per entry in the tree
/// instead of 67), and its position.
type Entry = GeomWithData<Rectangle<[f32; 2]>, u32>;

/// `b` rounded outward to f32: every point of `b` lies in the result, so
/// an entry and a query rounded so meet whenever the boxes they came from
/// do (the index still never loses a candidate; it may offer a feature a
/// few metres farther, which the exact test then refuses).
fn outward(b: &rstar::AABB<[f64; 2]>) -> rstar::AABB<[f32; 2]> {
    let (lo, hi) = (b.lower(), b.upper());
    let down = |x: f64| -f32_up(-x);
    rstar::AABB::from_corners([down(lo[0]), down(lo[1])], [f32_up(hi[0]), f32_up(hi[1])])
}

/// Bytes an R*-tree of `n` entries holds once built: every entry sits in
/// its parent's array as a node (rstar's `RTreeNode`, as large as the
/// larger of an entry and a parent), and the parents, at most 6 children
/// each (rstar's default parameters) and bulk loaded full, add at most a
/// fifth as many nodes again.
fn rtree_bytes<T: rstar::RTreeObject>(n: usize) -> usize {
    n.saturating_mul(std::mem::size_of::<rstar::RTreeNode<T>>()) / 5 * 6
}

/// An entry of the nearest-search index: a feature's box in Earth-centred
/// coordinates ([`space_box`]), rounded outward to f32, and its position.
type SpaceEntry = GeomWithData<Rectangle<[f32; 3]>, u32>;

/// How far (metres) a query point moves when its Earth-centred
/// coordinates are rounded to f32: each coordinate is below 2^23 m in
/// magnitude, where f32 values are 0.5 m apart, so it moves at most
/// 0.25 m, and the point at most 0.25 * sqrt(3) < 0.44 m.
const SPACE_QUERY_SHIFT: f64 = 0.44;

/// A lower bound (metres) on the straight-line distance from the f64 point
/// whose f32 rounding was queried to any point of an entry's box, from the
/// squared distance rstar computed in f32 (`d2`): each of the three gaps,
/// their squares and their sum is rounded once in f32 (relative error
/// at most 2^-24 each, under 3e-7 in all for the square, so the distance
/// is short of the rounded root by under 2e-7 of itself; 1e-6 is
/// allowed), and the query point itself may lie [`SPACE_QUERY_SHIFT`]
/// from the point asked about.
fn space_lower(d2: f32) -> f64 {
    (f64::from(d2).sqrt() * (1.0 - 1e-6) - SPACE_QUERY_SHIFT).max(0.0)
}

/// The extent of a layer's vertices in degrees: `west` and `east` in
/// [-180, 180], `south` and `north` in [-90, 90]. `west > east` when the
/// layer crosses the antimeridian (as RFC 7946 section 5.2 writes bounding
/// boxes); a layer all around the globe has west -180 and east 180.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Extent {
    pub west: f64,
    pub south: f64,
    pub east: f64,
    pub north: f64,
}

/// A layer of features with its index.
#[derive(Debug, Default)]
pub struct Layer {
    features: Vec<Feature>,
    tree: RTree<Entry>,
    /// The features' Earth-centred boxes, for the nearest search.
    space: RTree<SpaceEntry>,
    /// True when some feature's box was split at the antimeridian.
    split_boxes: bool,
    /// The feature ids, sorted.
    ids: Vec<i64>,
    extent: Option<Extent>,
}

/// Everything of a layer but its features: built while the layer it
/// replaces still answers queries, then joined to the features by
/// [`Layer::assemble`].
#[derive(Debug)]
pub struct LayerIndex {
    tree: RTree<Entry>,
    space: RTree<SpaceEntry>,
    split_boxes: bool,
    ids: Vec<i64>,
    extent: Option<Extent>,
    len: usize,
}

/// What [`Layer::index`] gathers; [`IndexInput::load`] builds the R*-tree
/// from it (one bulk load that cannot be stopped part way: about a second
/// per million features here).
#[derive(Debug)]
pub struct IndexInput {
    entries: Vec<Entry>,
    space: Vec<SpaceEntry>,
    split_boxes: bool,
    ids: Vec<i64>,
    extent: Option<Extent>,
    len: usize,
}

impl IndexInput {
    /// Bulk loads the R*-tree (its size was probed by [`Layer::index`]).
    pub fn load(self) -> LayerIndex {
        LayerIndex {
            tree: RTree::bulk_load(self.entries),
            space: RTree::bulk_load(self.space),
            split_boxes: self.split_boxes,
            ids: self.ids,
            extent: self.extent,
            len: self.len,
        }
    }
}

/// Longitude spans and latitude ranges gathered for an [`Extent`]: the
/// spans placed with their west ends in [-180, 180) and, separately, in
/// [0, 360); the narrower of the two results is the extent (exact when the
/// layer leaves some gap at the antimeridian or at the prime meridian, and
/// always covering every vertex).
#[derive(Clone, Copy, Debug)]
struct ExtentSum {
    lo: [f64; 2],
    hi: [f64; 2],
    south: f64,
    north: f64,
    whole_circle: bool,
    any: bool,
}

impl Default for ExtentSum {
    fn default() -> Self {
        ExtentSum {
            lo: [f64::INFINITY; 2],
            hi: [f64::NEG_INFINITY; 2],
            south: f64::INFINITY,
            north: f64::NEG_INFINITY,
            whole_circle: false,
            any: false,
        }
    }
}

impl ExtentSum {
    /// Adds one feature's vertices: its longitudes unwrapped along each
    /// line and ring (consecutive vertices less than 180 degrees apart, as
    /// geodesic edges are), parts placed near the feature's first vertex.
    fn add(&mut self, g: &Prepared) {
        let chains = g.chains();
        let Some(first) = g
            .points
            .first()
            .or_else(|| g.chains().flat_map(|c| c.first()).next())
        else {
            return;
        };
        let (mut lo, mut hi) = (0.0f64, 0.0f64);
        let (mut south, mut north) = (first.1, first.1);
        for p in g.points.iter() {
            let x = wrap_delta(first.0, p.0);
            lo = lo.min(x);
            hi = hi.max(x);
            south = south.min(p.1);
            north = north.max(p.1);
        }
        for chain in chains {
            let Some(start) = chain.first() else { continue };
            let mut x = wrap_delta(first.0, start.0);
            let mut prev = start.0;
            for p in chain {
                x += wrap_delta(prev, p.0);
                prev = p.0;
                lo = lo.min(x);
                hi = hi.max(x);
                south = south.min(p.1);
                north = north.max(p.1);
            }
        }
        self.any = true;
        self.south = self.south.min(south);
        self.north = self.north.max(north);
        if hi - lo >= 360.0 {
            self.whole_circle = true;
            return;
        }
        let (lo, hi) = (first.0 + lo, first.0 + hi);
        for (k, base) in [-180.0, 0.0].into_iter().enumerate() {
            let shift = 360.0 * ((lo - base) / 360.0).floor();
            self.lo[k] = self.lo[k].min(lo - shift);
            self.hi[k] = self.hi[k].max(hi - shift);
        }
    }

    fn extent(&self) -> Option<Extent> {
        if !self.any {
            return None;
        }
        let k = if self.hi[1] - self.lo[1] < self.hi[0] - self.lo[0] {
            1
        } else {
            0
        };
        let (west, east) = if self.whole_circle || self.hi[k] - self.lo[k] >= 360.0 {
            (-180.0, 180.0)
        } else {
            (wrap180(self.lo[k]), wrap180(self.hi[k]))
        };
        Some(Extent {
            west,
            south: self.south,
            east,
            north: self.north,
        })
    }
}

/// A longitude in (-180, 180] (180 stays 180; -180 stays -180).
fn wrap180(x: f64) -> f64 {
    if (-180.0..=180.0).contains(&x) {
        x
    } else {
        -wrap_delta(x, 0.0)
    }
}

impl Layer {
    /// A layer of these features (in any order), indexed. Ids are not
    /// checked (see [`Layer::check_ids`]); panics if memory runs out.
    pub fn new(features: Vec<Feature>) -> Layer {
        let mut ids: Vec<i64> = features.iter().map(|f| f.id).collect();
        ids.sort_unstable();
        let index = Layer::index(&[], &features, ids, &Never)
            .unwrap_or_else(|e| panic!("indexing a layer: {e}"))
            .load();
        Layer::assemble(index, features)
    }

    /// Prepares the features `rows` (id, reach in metres, geometry) on all
    /// cores, in batches, freeing each geometry once prepared. `stop` is
    /// read by every worker (between batches and inside large features);
    /// `progress` is told the number of features done after each batch.
    /// The result keeps the order of `rows`. Memory for the result is
    /// reserved first and every large array is allocated fallibly, so
    /// running out of memory is `Err(GeomError::OutOfMemory)`, not an
    /// abort; call [`Layer::estimated_bytes`] and [`memory::probe`] first
    /// to refuse a build that cannot fit before any work is done.
    pub fn prepare(
        rows: Vec<(i64, f64, Geometry)>,
        stop: &(dyn Interrupt + Sync),
        progress: &(dyn Fn(usize) + Sync),
    ) -> Result<Vec<Feature>, GeomError> {
        let mut out: Vec<Feature> = memory::vec_with_capacity(rows.len())?;
        let mut rows = rows.into_iter();
        let result = loop {
            if let Err(e) = stop.check() {
                break Err(e);
            }
            let mut batch = match memory::vec_with_capacity(BATCH_FEATURES) {
                Ok(b) => b,
                Err(e) => break Err(e),
            };
            let mut vertices = 0;
            while batch.len() < BATCH_FEATURES && vertices < BATCH_VERTICES {
                let Some(row) = rows.next() else { break };
                vertices += row.2.vertex_count();
                batch.push(row);
            }
            if batch.is_empty() {
                break Ok(());
            }
            let prepared: Result<Vec<Feature>, GeomError> = batch
                .into_par_iter()
                .map(|(id, reach, g)| {
                    stop.check()?;
                    Feature::build(id, reach, &g, stop)
                })
                .collect();
            match prepared {
                Ok(p) => out.extend(p),
                Err(e) => break Err(e),
            }
            progress(out.len());
        };
        match result {
            Ok(()) => Ok(out),
            Err(e) => {
                // Stopped: what was done is freed in the background.
                memory::discard((out, rows));
                Err(e)
            }
        }
    }

    /// An estimate, in bytes, of the memory building a layer of `rows`
    /// needs on top of what the rows hold: their prepared geometries, the
    /// features and the layer's index (rounded up; see
    /// [`Prepared::estimated_bytes`]).
    pub fn estimated_bytes<'g>(
        count: usize,
        geometries: impl Iterator<Item = &'g Geometry>,
    ) -> usize {
        let prepared: usize = geometries.map(Prepared::estimated_bytes).sum();
        prepared
            + count.saturating_mul(std::mem::size_of::<Feature>() + std::mem::size_of::<i64>())
            + tree_bytes(count, std::mem::size_of::<Entry>())
    }

    /// Checks the ids `added` (in the order they come) for a layer that
    /// already holds `base`'s features: an id `base` holds, or one given
    /// twice, is `Err(GeomError::DuplicateFeatureId)` (the first such id
    /// met; ids `base` holds are looked for first). Returns every id of the
    /// layer-to-be, sorted.
    pub fn check_ids(base: Option<&Layer>, added: &[i64]) -> Result<Vec<i64>, GeomError> {
        if let Some(base) = base {
            if let Some(&id) = added.iter().find(|&&id| base.holds(id)) {
                return Err(GeomError::DuplicateFeatureId { id, earlier: true });
            }
        }
        let mut sorted = memory::vec_with_capacity(added.len())?;
        sorted.extend_from_slice(added);
        sorted.sort_unstable();
        if let Some(w) = sorted.windows(2).find(|w| w[0] == w[1]) {
            // The first id, in the order given, that is given twice.
            let given_twice =
                |id: &i64| sorted.get(sorted.partition_point(|x| x < id) + 1) == Some(id);
            let id = added.iter().copied().find(given_twice).unwrap_or(w[0]);
            return Err(GeomError::DuplicateFeatureId { id, earlier: false });
        }
        let old = base.map_or(&[][..], |b| &b.ids[..]);
        let mut all = memory::vec_with_capacity(old.len() + sorted.len())?;
        let (mut i, mut j) = (0, 0);
        while i < old.len() || j < sorted.len() {
            if j == sorted.len() || (i < old.len() && old[i] < sorted[j]) {
                all.push(old[i]);
                i += 1;
            } else {
                all.push(sorted[j]);
                j += 1;
            }
        }
        Ok(all)
    }

    /// True when the layer holds a feature with this id.
    pub fn holds(&self, id: i64) -> bool {
        self.ids.binary_search(&id).is_ok()
    }

    /// The index of a layer holding `base` followed by `added` (the
    /// features keep those positions), whose sorted ids are `ids` (from
    /// [`Layer::check_ids`]). Reads `stop` every few thousand features;
    /// every array is allocated fallibly and the R*-tree's size is probed
    /// before its bulk load. Changes nothing outside its result.
    pub fn index(
        base: &[Feature],
        added: &[Feature],
        ids: Vec<i64>,
        stop: &dyn Interrupt,
    ) -> Result<IndexInput, GeomError> {
        let len = base.len() + added.len();
        let mut entries: Vec<Entry> = memory::vec_with_capacity(len)?;
        let mut space: Vec<SpaceEntry> = memory::vec_with_capacity(len)?;
        let mut with_box = 0;
        let mut extent = ExtentSum::default();
        for (i, f) in base.iter().chain(added).enumerate() {
            if i % CHECK_EVERY == CHECK_EVERY - 1 {
                stop.check()?;
            }
            extent.add(&f.geometry);
            if let Some(b) = space_box(&f.geometry.balls) {
                let down = |x: f64| -f32_up(-x);
                space.push(GeomWithData::new(
                    Rectangle::from_corners(
                        [down(b[0]), down(b[1]), down(b[2])],
                        [f32_up(b[3]), f32_up(b[4]), f32_up(b[5])],
                    ),
                    i as u32,
                ));
            }
            let Some(b) = f.geometry.bbox() else { continue };
            with_box += 1;
            for r in b.grown(f.reach).normalised() {
                memory::reserve_one(&mut entries)?;
                entries.push(GeomWithData::new(
                    Rectangle::from_aabb(outward(&r)),
                    i as u32,
                ));
            }
        }
        stop.check()?;
        memory::probe(
            tree_bytes(entries.len(), std::mem::size_of::<Entry>())
                + tree_bytes(space.len(), std::mem::size_of::<SpaceEntry>()),
        )?;
        Ok(IndexInput {
            split_boxes: entries.len() > with_box,
            entries,
            space,
            ids,
            extent: extent.extent(),
            len,
        })
    }

    /// The layer of `index` and its `features` (the `base` features of
    /// [`Layer::index`] followed by the `added` ones).
    /// Features made without [`Feature::build`] get their ball tree here.
    pub fn assemble(index: LayerIndex, mut features: Vec<Feature>) -> Layer {
        debug_assert_eq!(index.len, features.len());
        for f in &mut features {
            if f.geometry.tree().is_none() {
                f.geometry
                    .add_ball_tree(&Never)
                    .unwrap_or_else(|e| panic!("indexing a feature: {e}"));
            }
        }
        Layer {
            features,
            tree: index.tree,
            space: index.space,
            split_boxes: index.split_boxes,
            ids: index.ids,
            extent: index.extent,
        }
    }

    /// The extent of the layer's vertices (`None` for an empty layer).
    pub fn extent(&self) -> Option<Extent> {
        self.extent
    }

    /// The features, in the order they were added.
    pub fn features(&self) -> &[Feature] {
        &self.features
    }

    /// Takes the features back, to extend the layer.
    pub fn into_features(self) -> Vec<Feature> {
        self.features
    }

    /// The features and the index, apart (see [`Layer::assemble`]).
    pub fn into_parts(self) -> (Vec<Feature>, LayerIndex) {
        let len = self.features.len();
        (
            self.features,
            LayerIndex {
                tree: self.tree,
                space: self.space,
                split_boxes: self.split_boxes,
                ids: self.ids,
                extent: self.extent,
                len,
            },
        )
    }

    /// Total vertices of all features.
    pub fn vertices(&self) -> usize {
        self.features.iter().map(Feature::vertices).sum()
    }

    /// Memory held by the layer, bytes: its features ([`Feature::bytes`]),
    /// the two R*-trees ([`rtree_bytes`]) and the sorted ids (what
    /// ambit_layers reports; the allocator's own bookkeeping, a few bytes
    /// per allocation, is not counted).
    pub fn bytes(&self) -> usize {
        self.features.iter().map(Feature::bytes).sum::<usize>()
            + (self.features.capacity() - self.features.len()) * std::mem::size_of::<Feature>()
            + rtree_bytes::<Entry>(self.tree.size())
            + rtree_bytes::<SpaceEntry>(self.space.size())
            + self.ids.capacity() * std::mem::size_of::<i64>()
    }

    /// The positions of the features whose reach-grown boxes meet `b`, in
    /// the index's order (a feature may come twice when its box was split
    /// at the antimeridian). A feature within its reach of a geometry
    /// inside `b` is always among them.
    pub fn candidates_in<'a>(&'a self, b: &LonLatBox) -> impl Iterator<Item = usize> + 'a {
        let (parts, n) = b.normalised_parts();
        parts.into_iter().take(n).flat_map(move |q| {
            self.tree
                .locate_in_envelope_intersecting(outward(&q))
                .map(|e| e.data as usize)
        })
    }

    /// Features whose reach-grown boxes meet `g`'s box grown by `grow_m`,
    /// in the order they were added. A feature within `grow_m` metres of
    /// `g`, or within its own reach of `g`, is always among them.
    fn candidates(&self, g: &Prepared, grow_m: f64) -> Vec<usize> {
        let Some(b) = g.bbox() else {
            return Vec::new();
        };
        let queries = b.grown(grow_m).normalised();
        let mut found: Vec<usize> = queries
            .iter()
            .flat_map(|q| self.tree.locate_in_envelope_intersecting(outward(q)))
            .map(|e| e.data as usize)
            .collect();
        // Sorted, so answers follow the order features were added; a
        // feature appears twice only if its box was split and the query met
        // both halves.
        found.sort_unstable();
        if self.split_boxes || queries.len() > 1 {
            found.dedup();
        }
        found
    }

    /// The features within their reach of `g`, in the order they were
    /// added.
    pub fn reaching(&self, g: &Prepared) -> Vec<&Feature> {
        self.candidates(g, 0.0)
            .into_iter()
            .map(|i| &self.features[i])
            .filter(|f| within(g, &f.geometry, f.reach))
            .collect()
    }

    /// The share (0..=1) of the area of polygon `g` lying within reach of
    /// some feature: see [`crate::proximity::share`] for the method and its
    /// accuracy. `None` for an empty `g` or one of zero area. Stops when
    /// `stop` asks (`ShareError::Geom(GeomError::Interrupted)`).
    pub fn share(
        &self,
        g: &Prepared,
        stop: &dyn crate::interrupt::Interrupt,
    ) -> Result<Option<f64>, ShareError> {
        // As `reaching`, asking `stop` between features: each exact test
        // against a polygon of many vertices can take a millisecond.
        let mut reaching = Vec::new();
        for (k, i) in self.candidates(g, 0.0).into_iter().enumerate() {
            if k % 16 == 0 {
                stop.check()?;
            }
            let f = &self.features[i];
            if within_interruptible(g, &f.geometry, f.reach, stop)? {
                reaching.push(f);
            }
        }
        coverage_share(g, &reaching, stop)
    }

    /// True when some feature lies within its reach of `g`; stops at the
    /// first one found. False for an empty `g`.
    pub fn reached(&self, g: &Prepared) -> bool {
        self.reached_until(g, &Never).unwrap_or(false)
    }

    /// [`Layer::reached`], reading `stop` between candidates (every
    /// [`CHECK_CANDIDATES`]): `Err(GeomError::Interrupted)` when asked to stop.
    pub fn reached_until(&self, g: &Prepared, stop: &dyn Interrupt) -> Result<bool, GeomError> {
        for (k, i) in self.candidates(g, 0.0).into_iter().enumerate() {
            if k % CHECK_CANDIDATES == CHECK_CANDIDATES - 1 {
                stop.check()?;
            }
            let f = &self.features[i];
            if within_interruptible(g, &f.geometry, f.reach, stop)? {
                return Ok(true);
            }
        }
        Ok(false)
    }

    /// The number of features within their reach of `g`, or within
    /// `metres` of it when given.
    pub fn count(&self, g: &Prepared, metres: Option<f64>) -> usize {
        self.count_until(g, metres, &Never).unwrap_or(0)
    }

    /// [`Layer::count`], reading `stop` between candidates (every
    /// [`CHECK_CANDIDATES`]): `Err(GeomError::Interrupted)` when asked to stop.
    pub fn count_until(
        &self,
        g: &Prepared,
        metres: Option<f64>,
        stop: &dyn Interrupt,
    ) -> Result<usize, GeomError> {
        let mut n = 0;
        for (k, i) in self
            .candidates(g, metres.unwrap_or(0.0))
            .into_iter()
            .enumerate()
        {
            if k % CHECK_CANDIDATES == CHECK_CANDIDATES - 1 {
                stop.check()?;
            }
            let f = &self.features[i];
            n += usize::from(within_interruptible(
                g,
                &f.geometry,
                metres.unwrap_or(f.reach),
                stop,
            )?);
        }
        Ok(n)
    }

    /// `(feature id, distance in metres)` of every feature within its reach
    /// of `g` (or within `metres`), nearest first, ties by id.
    pub fn near(&self, g: &Prepared, metres: Option<f64>) -> Vec<(i64, f64)> {
        self.near_until(g, metres, &Never).unwrap_or_default()
    }

    /// [`Layer::near`], reading `stop` between candidates (every
    /// [`CHECK_CANDIDATES`]) and inside each: `Err(GeomError::Interrupted)`
    /// when asked to stop.
    pub fn near_until(
        &self,
        g: &Prepared,
        metres: Option<f64>,
        stop: &dyn Interrupt,
    ) -> Result<Vec<(i64, f64)>, GeomError> {
        let mut out: Vec<(i64, f64)> = Vec::new();
        for (k, i) in self
            .candidates(g, metres.unwrap_or(0.0))
            .into_iter()
            .enumerate()
        {
            if k % CHECK_CANDIDATES == CHECK_CANDIDATES - 1 {
                stop.check()?;
            }
            let f = &self.features[i];
            let cap = metres.unwrap_or(f.reach);
            if let Some(d) = distance_within_interruptible(g, &f.geometry, cap, stop)? {
                out.push((f.id, d));
            }
        }
        out.sort_by(|x, y| x.1.total_cmp(&y.1).then(x.0.cmp(&y.0)));
        Ok(out)
    }

    /// The distance in metres from `g` to the nearest feature (reach plays
    /// no part), or `None` when there is none within `max_m` (or the layer
    /// or `g` is empty). See [`Layer::nearest_search`] for the method; its
    /// cost grows with the number of elements whose lower bound falls near
    /// the minimum, not with the distance.
    pub fn nearest(&self, g: &Prepared, max_m: Option<f64>) -> Option<f64> {
        self.nearest_until(g, max_m, &Never).unwrap_or(None)
    }

    /// [`Layer::nearest`], reading `stop` as the search goes:
    /// `Err(GeomError::Interrupted)` when asked to stop.
    pub fn nearest_until(
        &self,
        g: &Prepared,
        max_m: Option<f64>,
        stop: &dyn Interrupt,
    ) -> Result<Option<f64>, GeomError> {
        Ok(self.nearest_search(g, max_m, stop)?.map(|(d, _)| d))
    }

    /// The nearest feature within `max_m` and its distance (the first
    /// added among equally near ones). Best first: features come from the
    /// Earth-centred index in order of the chord from `g`'s ball centre to
    /// their boxes, which less `g`'s radius is a lower bound on their
    /// distance (a chord never exceeds the geodesic); the search stops when
    /// that bound exceeds the best distance found or `max_m`. Each feature
    /// is searched by [`nearest_between`] only up to the best distance found
    /// so far. The order changes the work done, never the answer.
    fn nearest_search(
        &self,
        g: &Prepared,
        max_m: Option<f64>,
        stop: &dyn Interrupt,
    ) -> Result<Option<(f64, usize)>, GeomError> {
        let Some(ball) = g.ball else {
            return Ok(None);
        };
        let limit = max_m.unwrap_or(MAX_SEPARATION).min(MAX_SEPARATION);
        // g's ball tree, built when first needed.
        let mut own: Option<BallTree> = None;
        let mut best: Option<(f64, usize)> = None;
        // Large features met before any distance is known wait until the
        // small ones near them have given one (their search is then capped).
        let mut deferred: Vec<(f64, usize)> = Vec::new();
        let near = self
            .space
            .nearest_neighbor_iter_with_distance_2(ball.xyz.map(|x| x as f32))
            .map(|(entry, d2)| (space_lower(d2) - ball.radius, entry.data as usize));
        let mut near = near.peekable();
        let mut k = 0usize;
        loop {
            k += 1;
            if k.is_multiple_of(CHECK_CANDIDATES) {
                stop.check()?;
            }
            let cap = best.map_or(limit, |b| b.0).min(limit);
            let next = match near.peek() {
                Some(&(lower, i)) if lower <= cap => {
                    near.next();
                    if best.is_none() && self.features[i].geometry.indexed() {
                        deferred.push((lower, i));
                        continue;
                    }
                    (lower, i)
                }
                _ => match deferred.pop() {
                    Some(d) => d,
                    None => break,
                },
            };
            let (lower, i) = next;
            if lower > cap {
                continue;
            }
            let f = &self.features[i].geometry;
            let Some(ft) = f.tree() else { continue };
            // A small feature nearby: the pairwise search of
            // distance_within is cheapest; a large or far one (where the
            // chord bounds are loose): the best-first search.
            let near_and_small =
                !f.indexed() && !g.indexed() && f.ball.is_some_and(|fb| fb.gap(&ball) < TIGHT_FROM);
            let d = if near_and_small {
                distance_within_interruptible(g, f, cap, stop)?.unwrap_or(f64::INFINITY)
            } else {
                let tree = match (g.tree(), &mut own) {
                    (Some(t), _) => t,
                    (None, Some(t)) => &*t,
                    (None, slot) => &*slot.insert(BallTree::build(g, stop)?),
                };
                nearest_between(g, tree, f, ft, cap, stop)?
            };
            if d <= cap {
                let better = match best {
                    None => true,
                    Some((b, j)) => d < b || (d == b && i < j),
                };
                if better {
                    best = Some((d, i));
                }
            }
        }
        Ok(best)
    }

    /// `reached` and `nearest` (within `max_m` when given) at once, as the
    /// sweep reports them: when the nearest feature is within its own
    /// reach, `g` is reached without a second search; otherwise the reach
    /// test of [`Layer::reached`] runs.
    pub fn reached_and_nearest(&self, g: &Prepared, max_m: Option<f64>) -> (bool, Option<f64>) {
        self.reached_and_nearest_until(g, max_m, &Never)
            .unwrap_or((false, None))
    }

    /// [`Layer::reached_and_nearest`], reading `stop` as
    /// [`Layer::nearest_until`] does and between the reach tests:
    /// `Err(GeomError::Interrupted)` when asked to stop.
    pub fn reached_and_nearest_until(
        &self,
        g: &Prepared,
        max_m: Option<f64>,
        stop: &dyn Interrupt,
    ) -> Result<(bool, Option<f64>), GeomError> {
        let nearest = self.nearest_search(g, max_m, stop)?;
        let reached = match nearest {
            Some((d, i)) if d <= self.features[i].reach => true,
            _ => self.reached_until(g, stop)?,
        };
        Ok((reached, nearest.map(|(d, _)| d)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::blob::wkt;

    fn feature(id: i64, text: &str, reach: f64) -> Feature {
        let g = wkt::parse(text).unwrap();
        Feature {
            id,
            reach,
            geometry: Prepared::new(&g),
        }
    }

    fn prep(text: &str) -> Prepared {
        Prepared::new(&wkt::parse(text).unwrap())
    }

    #[test]
    fn reach_per_feature_decides() {
        // Two facilities 0.02 degrees of longitude (~1.74 km at 38.4) east
        // and west of a block; only the one with the 3-mile reach reaches.
        let layer = Layer::new(vec![
            feature(1, "POINT (-131.52 38.4)", 1609.344),
            feature(2, "POINT (-131.48 38.4)", 4828.032),
        ]);
        let block = prep("POLYGON ((-131.501 38.399, -131.499 38.399, -131.499 38.401, -131.501 38.401, -131.501 38.399))");
        assert!(layer.reached(&block));
        assert_eq!(layer.count(&block, None), 1);
        assert_eq!(layer.count(&block, Some(2000.0)), 2);
        let near = layer.near(&block, Some(5000.0));
        assert_eq!(near.len(), 2);
        assert!(near[0].1 <= near[1].1);
        let nearest = layer.nearest(&block, None).unwrap();
        assert_eq!(nearest, near[0].1);
        assert_eq!(layer.nearest(&block, Some(100.0)), None);
    }

    #[test]
    fn features_across_the_antimeridian_are_found() {
        let layer = Layer::new(vec![feature(
            7,
            "POLYGON ((179.99 -16.01, 180.01 -16.01, 180.01 -15.99, 179.99 -15.99, 179.99 -16.01))",
            600.0,
        )]);
        // 0.005 degrees of longitude at latitude 16 is about 535 m.
        let east = prep("POINT (-179.985 -16.0)");
        assert!(layer.reached(&east));
        let west = prep("POINT (179.985 -16.0)");
        assert!(layer.reached(&west));
        let far = prep("POINT (-179.97 -16.0)");
        assert!(!layer.reached(&far));
        assert!(layer.nearest(&far, None).unwrap() > 600.0);
    }

    #[test]
    fn ids_already_held_or_given_twice_are_refused() {
        let layer = Layer::new(vec![
            feature(5, "POINT (1 2)", 0.0),
            feature(2, "POINT (1 3)", 0.0),
        ]);
        assert_eq!(
            Layer::check_ids(Some(&layer), &[9, 2, 9]),
            Err(GeomError::DuplicateFeatureId {
                id: 2,
                earlier: true
            })
        );
        // The first id given twice, in the order given.
        assert_eq!(
            Layer::check_ids(None, &[4, 8, 3, 8, 4]),
            Err(GeomError::DuplicateFeatureId {
                id: 4,
                earlier: false
            })
        );
        assert_eq!(
            Layer::check_ids(Some(&layer), &[7, 1]),
            Ok(vec![1, 2, 5, 7])
        );
        assert!(layer.holds(5) && !layer.holds(7));
    }

    #[test]
    fn the_extent_is_that_of_the_vertices_and_may_cross_the_antimeridian() {
        // Vertex extremes, read off the coordinates below (brute force).
        let layer = Layer::new(vec![
            feature(1, "POINT (-131.5 38.2)", 5000.0),
            feature(2, "LINESTRING (-131.2 38.6, -130.9 38.1)", 0.0),
        ]);
        let e = layer.extent().unwrap();
        assert_eq!(
            (e.west, e.south, e.east, e.north),
            (-131.5, 38.1, -130.9, 38.6)
        );
        // A line across 180 and a point east of it: west > east.
        let layer = Layer::new(vec![
            feature(1, "LINESTRING (179.5 -16.2, -179.8 -16.0)", 0.0),
            feature(2, "POINT (-179.25 -15.9)", 0.0),
        ]);
        let e = layer.extent().unwrap();
        assert_eq!(
            (e.west, e.south, e.east, e.north),
            (179.5, -16.2, -179.25, -15.9)
        );
        // Features on both sides of the globe, with a gap at 0 degrees.
        let layer = Layer::new(vec![
            feature(1, "POINT (100 1)", 0.0),
            feature(2, "POINT (-100 2)", 0.0),
        ]);
        let e = layer.extent().unwrap();
        assert_eq!((e.west, e.east), (100.0, -100.0));
        // A ring around the north pole spans every longitude.
        let layer = Layer::new(vec![feature(
            1,
            "POLYGON ((0 80, 90 80, 180 80, -90 80, 0 80))",
            0.0,
        )]);
        let e = layer.extent().unwrap();
        assert_eq!((e.west, e.east, e.south), (-180.0, 180.0, 80.0));
        assert_eq!(Layer::new(vec![]).extent(), None);
    }

    #[test]
    fn an_interrupted_preparation_returns_interrupted() {
        use crate::interrupt::AfterChecks;
        // A ring of 200,000 vertices: several checks while it is prepared.
        let n = 200_000;
        let ring: Vec<String> = (0..n)
            .map(|k| {
                let t = std::f64::consts::TAU * k as f64 / n as f64;
                format!("{} {}", -131.0 + 0.2 * t.cos(), 38.4 + 0.2 * t.sin())
            })
            .chain(std::iter::once("-130.8 38.4".to_string()))
            .collect();
        let g = wkt::parse(&format!("POLYGON (({}))", ring.join(", "))).unwrap();
        for after in [0, 1, 2] {
            assert_eq!(
                Prepared::build(&g, &AfterChecks::new(after)).err(),
                Some(GeomError::Interrupted)
            );
        }
        assert!(Prepared::build(&g, &Never).is_ok());
        let stop = crate::interrupt::StopFlag::new();
        stop.set();
        let rows = vec![(1, 0.0, g)];
        assert_eq!(
            Layer::prepare(rows, &stop, &|_| {}).err(),
            Some(GeomError::Interrupted)
        );
    }

    #[test]
    fn empty_layers_and_geometries_reach_nothing() {
        let layer = Layer::new(vec![]);
        let g = prep("POINT (1 2)");
        assert!(!layer.reached(&g));
        assert_eq!(layer.nearest(&g, None), None);
        let layer = Layer::new(vec![feature(1, "POINT (1 2)", 10.0)]);
        let empty = prep("POINT EMPTY");
        assert!(!layer.reached(&empty));
        assert_eq!(layer.count(&empty, None), 0);
        assert_eq!(layer.nearest(&empty, None), None);
    }
}
