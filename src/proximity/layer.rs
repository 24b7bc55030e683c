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

use rstar::primitives::{GeomWithData, Rectangle};
use rstar::RTree;

use crate::proximity::distance::{distance_within, within};
use crate::proximity::prepared::Prepared;
use crate::proximity::share::{coverage_share, ShareError};

/// Half the circumference, metres: no two points are farther apart.
const MAX_SEPARATION: f64 = 20_004_000.0;

/// One feature of a layer.
#[derive(Clone, Debug)]
pub struct Feature {
    pub id: i64,
    /// Metres; 0 means touching or containing.
    pub reach: f64,
    pub geometry: Prepared,
    /// Vertices in the stored geometry.
    pub vertices: usize,
}

impl Feature {
    /// Memory held by the feature, bytes (approximate, for ambit_layers).
    pub fn bytes(&self) -> usize {
        let g = &self.geometry;
        std::mem::size_of::<Feature>()
            + g.elements.capacity()
                * std::mem::size_of::<(
                    crate::proximity::prepared::Element,
                    crate::proximity::prepared::Ball,
                )>()
            + g.owners.capacity()
                * std::mem::size_of::<Option<crate::proximity::prepared::RingRef>>()
            + self.vertices * 16 * 2
            + g.index.as_ref().map_or(0, |t| t.size() * 48)
    }
}

type Entry = GeomWithData<Rectangle<[f64; 2]>, u32>;

/// A layer of features with its index.
#[derive(Debug, Default)]
pub struct Layer {
    features: Vec<Feature>,
    tree: RTree<Entry>,
    /// True when some feature's box was split at the antimeridian.
    split_boxes: bool,
}

impl Layer {
    /// A layer of these features (in any order), indexed.
    pub fn new(features: Vec<Feature>) -> Layer {
        let entries: Vec<Entry> = features
            .iter()
            .enumerate()
            .filter_map(|(i, f)| f.geometry.bbox.map(|b| (i, b.grown(f.reach))))
            .flat_map(|(i, b)| {
                b.normalised()
                    .into_iter()
                    .map(move |r| GeomWithData::new(Rectangle::from_aabb(r), i as u32))
            })
            .collect();
        let split_boxes = entries.len()
            > features
                .iter()
                .filter(|f| f.geometry.bbox.is_some())
                .count();
        Layer {
            tree: RTree::bulk_load(entries),
            features,
            split_boxes,
        }
    }

    /// The features, in the order they were added.
    pub fn features(&self) -> &[Feature] {
        &self.features
    }

    /// Takes the features back, to extend the layer.
    pub fn into_features(self) -> Vec<Feature> {
        self.features
    }

    /// Total vertices of all features.
    pub fn vertices(&self) -> usize {
        self.features.iter().map(|f| f.vertices).sum()
    }

    /// Memory held by the layer, bytes (approximate).
    pub fn bytes(&self) -> usize {
        self.features.iter().map(Feature::bytes).sum::<usize>() + self.tree.size() * 48
    }

    /// Features whose reach-grown boxes meet `g`'s box grown by `grow_m`,
    /// in the order they were added. A feature within `grow_m` metres of
    /// `g`, or within its own reach of `g`, is always among them.
    fn candidates(&self, g: &Prepared, grow_m: f64) -> Vec<usize> {
        let Some(b) = g.bbox else {
            return Vec::new();
        };
        let queries = b.grown(grow_m).normalised();
        let mut found: Vec<usize> = queries
            .iter()
            .flat_map(|q| self.tree.locate_in_envelope_intersecting(*q))
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
            if within(g, &f.geometry, f.reach) {
                reaching.push(f);
            }
        }
        coverage_share(g, &reaching, stop)
    }

    /// True when some feature lies within its reach of `g`; stops at the
    /// first one found. False for an empty `g`.
    pub fn reached(&self, g: &Prepared) -> bool {
        self.candidates(g, 0.0).into_iter().any(|i| {
            let f = &self.features[i];
            within(g, &f.geometry, f.reach)
        })
    }

    /// The number of features within their reach of `g`, or within
    /// `metres` of it when given.
    pub fn count(&self, g: &Prepared, metres: Option<f64>) -> usize {
        self.candidates(g, metres.unwrap_or(0.0))
            .into_iter()
            .filter(|&i| {
                let f = &self.features[i];
                within(g, &f.geometry, metres.unwrap_or(f.reach))
            })
            .count()
    }

    /// `(feature id, distance in metres)` of every feature within its reach
    /// of `g` (or within `metres`), nearest first, ties by id.
    pub fn near(&self, g: &Prepared, metres: Option<f64>) -> Vec<(i64, f64)> {
        let mut out: Vec<(i64, f64)> = self
            .candidates(g, metres.unwrap_or(0.0))
            .into_iter()
            .filter_map(|i| {
                let f = &self.features[i];
                distance_within(g, &f.geometry, metres.unwrap_or(f.reach)).map(|d| (f.id, d))
            })
            .collect();
        out.sort_by(|x, y| x.1.total_cmp(&y.1).then(x.0.cmp(&y.0)));
        out
    }

    /// The distance in metres from `g` to the nearest feature (reach plays
    /// no part), or `None` when there is none within `max_m` (or the layer
    /// or `g` is empty). The search widens from 1 km by factors of 4 until
    /// a feature is found.
    pub fn nearest(&self, g: &Prepared, max_m: Option<f64>) -> Option<f64> {
        self.nearest_feature(g, max_m).map(|(d, _)| d)
    }

    /// [`Layer::nearest`] with the position of the nearest feature (the
    /// first added among equally near ones).
    fn nearest_feature(&self, g: &Prepared, max_m: Option<f64>) -> Option<(f64, usize)> {
        self.nearest_search(g, max_m, &mut None)
    }

    /// The nearest feature within `max_m`, widening from 1 km by factors of
    /// 4; `first_candidates` receives the candidates of the first (1 km)
    /// round, which include every feature whose reach-grown box meets
    /// `g`'s box.
    fn nearest_search(
        &self,
        g: &Prepared,
        max_m: Option<f64>,
        first_candidates: &mut Option<Vec<usize>>,
    ) -> Option<(f64, usize)> {
        let ball = g.ball?;
        let limit = max_m.unwrap_or(MAX_SEPARATION).min(MAX_SEPARATION);
        let mut radius = limit.min(1000.0);
        loop {
            let candidates = self.candidates(g, radius);
            let best = self.best_first(g, &ball, &candidates, radius);
            if first_candidates.is_none() {
                *first_candidates = Some(candidates);
            }
            if best.is_some() || radius >= limit {
                return best;
            }
            radius = (radius * 4.0).min(limit);
        }
    }

    /// The nearest of `candidates` within `radius` of `g` (the first added
    /// among equally near ones). Best first: candidates by the lower bound
    /// their balls give, each searched only up to the best distance found
    /// so far; small features first, so that a large one (with an element
    /// index) is searched only up to a distance already found. The order
    /// changes the work done, never the answer.
    fn best_first(
        &self,
        g: &Prepared,
        ball: &crate::proximity::prepared::Ball,
        candidates: &[usize],
        radius: f64,
    ) -> Option<(f64, usize)> {
        let mut ranked: Vec<(bool, f64, usize)> = candidates
            .iter()
            .filter_map(|&i| {
                let f = &self.features[i].geometry;
                let fb = f.ball?;
                Some((f.index.is_some(), ball.gap(&fb).max(0.0), i))
            })
            .collect();
        ranked.sort_unstable_by(|x, y| x.0.cmp(&y.0).then(x.1.total_cmp(&y.1)).then(x.2.cmp(&y.2)));
        let mut best: Option<(f64, usize)> = None;
        for (_, lower, i) in ranked {
            let cap = best.map_or(radius, |b| b.0).min(radius);
            if lower > cap {
                continue;
            }
            if let Some(d) = distance_within(g, &self.features[i].geometry, cap) {
                let better = match best {
                    None => true,
                    Some((b, j)) => d < b || (d == b && i < j),
                };
                if better {
                    best = Some((d, i));
                }
            }
        }
        best
    }

    /// `reached` and `nearest` at once, as the sweep reports them: when
    /// the nearest feature is within its own reach, `g` is reached without
    /// a second search; otherwise the candidates of the nearest search's
    /// first round (a superset of those `reached` would look at) are
    /// tested.
    pub fn reached_and_nearest(&self, g: &Prepared) -> (bool, Option<f64>) {
        let mut first = None;
        let nearest = self.nearest_search(g, None, &mut first);
        let reached = match nearest {
            Some((d, i)) if d <= self.features[i].reach => true,
            _ => first.unwrap_or_default().into_iter().any(|i| {
                let f = &self.features[i];
                within(g, &f.geometry, f.reach)
            }),
        };
        (reached, nearest.map(|(d, _)| d))
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
            vertices: g.vertex_count(),
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
