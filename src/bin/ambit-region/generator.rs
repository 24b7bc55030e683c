//! The generator: blocks tract by tract, and the parks, facilities and
//! amenities placed in them.

use crate::{
    grid::{
        Grid, Leaf, Node, FINE, SIDE_SEGMENTS, TRACT_MAX_BLOCKS, TRACT_MAX_POP, TRACT_TOP,
        URBAN_LEVEL,
    },
    layout::Land,
    names::{
        ACTIVITIES, BOOKMOBILE_STOP, CATEGORIES, CLINIC_ENDINGS, COUNTY_LINE_CLINIC, HAZARD_KINDS,
        PARK_KINDS, RESIDENTS_PER_BRANCH, RESIDENTS_PER_CLINIC, RURAL_RESIDENTS_PER_STORE,
        STORE_KINDS, URBAN_RESIDENTS_PER_STORE, WORDS_A, WORDS_B,
    },
    output::{Csv, Extent},
    random::{
        hash, q6, q7, Rng, TAG_CLINIC, TAG_GROCERY, TAG_HAZARD, TAG_LIBRARY, TAG_PARK, TAG_POP,
        TAG_SITE, TAG_SPECIAL,
    },
    shapes::{close, flatten, offset, polygon, ragged, reverse_ring, star, BoundarySide},
};
use ambit::blob::wkt;
use ambit::geometry::{Dimensions, Geometry, Shape};
use std::collections::HashMap;

#[derive(Default)]
pub struct Stats {
    pub blocks: u64,
    pub urban_blocks: u64,
    pub zero_pop: u64,
    pub water: u64,
    pub population: u64,
    pub tracts: u64,
    pub max_block_vertices: usize,
    pub parks_with_holes: u64,
    pub multi_parks: u64,
    pub duplicates: u64,
    pub no_coordinates: u64,
    pub convenience: u64,
    pub unknown_capacity: u64,
    pub county_line_clinics: u64,
    pub footprints: u64,
    /// The most vertices of one park.
    pub max_park_vertices: usize,
}

/// A library waiting to be written: the central libraries are known only
/// when every block has been seen, and are written first.
pub struct LibraryRow {
    pub name: String,
    pub branch_type: &'static str,
    pub lon: f64,
    pub lat: f64,
}

pub struct Generator<'a> {
    pub g: &'a Grid<'a>,
    pub seed: u64,
    pub lakes: Vec<Leaf>,
    pub blocks: Csv,
    pub parks: Csv,
    pub rec: Csv,
    pub fitness: Csv,
    pub groceries: Csv,
    pub clinics: Csv,
    pub hazards: Csv,
    pub libraries: Vec<LibraryRow>,
    /// Per county, its densest land block (density at the block centre,
    /// the block), where the central library goes.
    pub densest: Vec<Option<(f64, Leaf)>>,
    pub county_sides: Vec<Vec<BoundarySide>>,
    pub urban_sides: Vec<Vec<BoundarySide>>,
    pub extents: HashMap<&'static str, Extent>,
    pub stats: Stats,
}

impl Generator<'_> {
    pub fn extent(&mut self, table: &'static str, g: &Geometry) {
        self.extents.entry(table).or_insert(Extent::EMPTY).add(g);
    }

    /// Writes every block, county by county, tract by tract.
    pub fn run_blocks(&mut self) -> std::io::Result<()> {
        let top = FINE << -TRACT_TOP;
        let mut leaves = Vec::new();
        for county in 1..=self.g.lay.counties.len() as u8 {
            let mut tract_no = 0u32;
            for y in (0..self.g.h).step_by(top as usize) {
                for x in (0..self.g.w).step_by(top as usize) {
                    let node = Node {
                        level: TRACT_TOP,
                        x,
                        y,
                    };
                    self.tracts(node, county, &mut tract_no, &mut leaves)?;
                }
            }
        }
        Ok(())
    }

    /// The blocks of `county` under `node` and whether they are too many
    /// (or too populous) for one tract and can be split.
    pub fn too_big(&self, node: Node, county: u8, leaves: &mut Vec<Leaf>) -> bool {
        leaves.clear();
        self.g.leaves(node, county, leaves);
        let pop: u64 = leaves.iter().map(|&l| self.population(l) as u64).sum();
        (pop > TRACT_MAX_POP || leaves.len() > TRACT_MAX_BLOCKS) && self.g.node_split(node)
    }

    /// Tracts under `node`, numbered as census practice does: a tract that
    /// was split keeps its basic number and its parts get suffixes .01 to
    /// .04; an unsplit tract has suffix .00 (codes NNNNSS).
    pub fn tracts(
        &mut self,
        node: Node,
        county: u8,
        tract_no: &mut u32,
        leaves: &mut Vec<Leaf>,
    ) -> std::io::Result<()> {
        if !self.too_big(node, county, leaves) {
            if !leaves.is_empty() {
                let list = std::mem::take(leaves);
                self.tract(&list, county, tract_no, 0)?;
                *leaves = list;
            }
            return Ok(());
        }
        let children = node.children();
        if children.iter().any(|&c| self.too_big(c, county, leaves)) {
            for c in children {
                self.tracts(c, county, tract_no, leaves)?;
            }
            return Ok(());
        }
        let mut suffix = 0;
        for c in children {
            leaves.clear();
            self.g.leaves(c, county, leaves);
            if !leaves.is_empty() {
                suffix += 1;
                let list = std::mem::take(leaves);
                self.tract(&list, county, tract_no, suffix)?;
                *leaves = list;
            }
        }
        Ok(())
    }

    /// Writes the blocks of one tract: a new basic number for suffix 0 or
    /// 1, the current one for later suffixes.
    pub fn tract(
        &mut self,
        blocks: &[Leaf],
        county: u8,
        tract_no: &mut u32,
        suffix: u32,
    ) -> std::io::Result<()> {
        if suffix <= 1 {
            *tract_no += 1;
        }
        if *tract_no > 9999 {
            return Err(std::io::Error::other(
                "more than 9999 tracts in a county: ask for fewer blocks",
            ));
        }
        self.stats.tracts += 1;
        let lay = self.g.lay;
        let prefix = format!(
            "{}{}{:04}{suffix:02}",
            lay.state,
            lay.counties[county as usize - 1].code,
            *tract_no
        );
        // Block numbers: the block group digit, then 000-099.
        for (i, &leaf) in blocks.iter().enumerate() {
            let geoid = format!("{prefix}{:04}", 1000 * (1 + i / 100) + i % 100);
            self.block(leaf, county, &geoid)?;
        }
        Ok(())
    }

    /// The population of a block: urban 20-400 (8% empty), rural 1-60 (25%
    /// empty), lakes 0.
    pub fn population(&self, leaf: Leaf) -> u32 {
        if self.lakes.contains(&leaf) {
            return 0;
        }
        let mut r = Rng(hash(self.seed, TAG_POP, leaf.level as i64, leaf.x, leaf.y));
        if leaf.level >= URBAN_LEVEL {
            if r.unit() < 0.08 {
                0
            } else {
                let u = r.unit();
                20 + (380.0 * u * u).round() as u32
            }
        } else if r.unit() < 0.25 {
            0
        } else {
            let u = r.unit();
            1 + (59.0 * u * u).round() as u32
        }
    }

    pub fn block(&mut self, leaf: Leaf, county: u8, geoid: &str) -> std::io::Result<()> {
        let g = self.g;
        let sides = g.block_sides(leaf);
        let core = g.urban_core(leaf);
        let mut ring: Vec<[f64; 2]> = Vec::with_capacity(4 * SIDE_SEGMENTS + 1);
        let mut on_county_line = false;
        for &(p, q) in &sides {
            let v = g.side_vertices(p, q);
            let n = v.len() - 1;
            // Boundaries of the county and of the urban area.
            let (rx, ry) = Grid::right_of(p, q);
            let other = g.county_at(rx, ry);
            on_county_line |= other != county && other != 0;
            if other != county {
                self.county_sides[county as usize - 1].push(BoundarySide {
                    from: p,
                    to: q,
                    points: v[..n].to_vec(),
                    other,
                });
            }
            if let Some(c) = core {
                let across = g.leaf_at(rx, ry).and_then(|l| g.urban_core(l));
                if across != Some(c) {
                    self.urban_sides[c].push(BoundarySide {
                        from: p,
                        to: q,
                        points: v[..n].to_vec(),
                        other: 0,
                    });
                }
            }
            ring.extend_from_slice(&v[..n]);
        }
        ring.push(ring[0]);
        let water = self.lakes.contains(&leaf);
        let pop = self.population(leaf);
        let geom = polygon(vec![flatten(&ring)]);
        self.extent("blocks", &geom);
        self.stats.blocks += 1;
        self.stats.urban_blocks += core.is_some() as u64;
        self.stats.zero_pop += (pop == 0) as u64;
        self.stats.water += water as u64;
        self.stats.population += pop as u64;
        self.stats.max_block_vertices = self.stats.max_block_vertices.max(ring.len());
        let fid = (self.blocks.rows + 1).to_string();
        self.blocks.write(&[
            &fid,
            geoid,
            &pop.to_string(),
            if water { "1" } else { "0" },
            &wkt::write(&geom),
        ])?;
        if !water {
            if !g.lay.remote {
                self.spawn(leaf, core.is_some())?;
            }
            self.amenities(leaf, county, pop, core.is_some(), on_county_line)?;
        }
        Ok(())
    }

    /// A point in the inner part of a block (the middle 40% of its lattice
    /// square, which its jittered, meandering boundary never reaches), as
    /// quantized longitude and latitude.
    pub fn inner_point(&self, r: &mut Rng, leaf: Leaf) -> (f64, f64) {
        let s = leaf.size() as f64;
        let (lon, lat) = self.g.lonlat(
            leaf.x as f64 + s * r.range(0.3, 0.7),
            leaf.y as f64 + s * r.range(0.3, 0.7),
        );
        (q7(lon), q7(lat))
    }

    /// Food stores, clinics, hazard sites and libraries placed in a land
    /// block, each from a hash of its own tag and the block.
    pub fn amenities(
        &mut self,
        leaf: Leaf,
        county: u8,
        pop: u32,
        urban: bool,
        on_county_line: bool,
    ) -> std::io::Result<()> {
        let key = (leaf.level as i64, leaf.x, leaf.y);
        let (lon, lat) = self.g.leaf_center(leaf);
        let d = self.g.lay.density(lon, lat);
        let best = &mut self.densest[county as usize - 1];
        if best.is_none_or(|(b, _)| d > b) {
            *best = Some((d, leaf));
        }

        let mut r = Rng(hash(self.seed, TAG_GROCERY, key.0, key.1, key.2));
        let per_store = if urban {
            URBAN_RESIDENTS_PER_STORE
        } else {
            RURAL_RESIDENTS_PER_STORE
        };
        if r.unit() < pop as f64 / per_store {
            let mut u = r.unit();
            let mut pick = STORE_KINDS[STORE_KINDS.len() - 1];
            for k in STORE_KINDS {
                let share = if urban { k.2 } else { k.3 };
                if u < share {
                    pick = k;
                    break;
                }
                u -= share;
            }
            let (kind, ending, _, _) = pick;
            let name = format!("{} {} {ending}", r.pick(&WORDS_A), r.pick(&WORDS_B));
            let (x, y) = self.inner_point(&mut r, leaf);
            let geom = Geometry::point(x, y);
            self.extent("groceries", &geom);
            self.stats.convenience += (kind == "convenience store") as u64;
            let fid = self.groceries.rows + 1;
            self.groceries.write(&[
                &fid.to_string(),
                &format!("GR{}{fid:05}", self.g.lay.id_prefix),
                &name,
                kind,
                &wkt::write(&geom),
            ])?;
        }

        let mut r = Rng(hash(self.seed, TAG_CLINIC, key.0, key.1, key.2));
        let by_population = r.unit() < pop as f64 / RESIDENTS_PER_CLINIC;
        let by_line = on_county_line && r.unit() < COUNTY_LINE_CLINIC;
        if by_population || by_line {
            let name = format!(
                "{} {} {}",
                r.pick(&WORDS_A),
                r.pick(&WORDS_B),
                r.pick(&CLINIC_ENDINGS)
            );
            // Full-time-equivalent providers: skewed towards small
            // practices, larger in the cities; about 3% unknown.
            let u = r.unit();
            let providers = if r.unit() < 0.03 {
                String::new()
            } else if urban {
                format!("{:.1}", 0.5 + 19.5 * u * u * u)
            } else {
                format!("{:.1}", 0.5 + 5.5 * u * u)
            };
            let (x, y) = self.inner_point(&mut r, leaf);
            let geom = Geometry::point(x, y);
            self.extent("clinics", &geom);
            self.stats.unknown_capacity += providers.is_empty() as u64;
            self.stats.county_line_clinics += (by_line && !by_population) as u64;
            let fid = self.clinics.rows + 1;
            self.clinics.write(&[
                &fid.to_string(),
                &format!("CL{}{fid:05}", self.g.lay.id_prefix),
                &name,
                &providers,
                &wkt::write(&geom),
            ])?;
        }

        let mut r = Rng(hash(self.seed, TAG_HAZARD, key.0, key.1, key.2));
        // Industry sits at the edge of the cities more than in their
        // centres, and thinly in the country.
        let chance = match leaf.level {
            0 | 1 => 0.006,
            2 => 0.008,
            3 => 0.004,
            _ => 0.0015,
        };
        if r.unit() < chance {
            self.hazard_site(&mut r, leaf, urban)?;
        }

        let mut r = Rng(hash(self.seed, TAG_LIBRARY, key.0, key.1, key.2));
        let branch = r.unit() < pop as f64 / RESIDENTS_PER_BRANCH;
        let stop = !urban && pop > 0 && r.unit() < BOOKMOBILE_STOP;
        if branch || stop {
            let (branch_type, ending) = if branch {
                ("branch", "Branch Library")
            } else {
                ("bookmobile stop", "Bookmobile Stop")
            };
            let name = format!("{} {} {ending}", r.pick(&WORDS_A), r.pick(&WORDS_B));
            let (lon, lat) = self.inner_point(&mut r, leaf);
            self.libraries.push(LibraryRow {
                name,
                branch_type,
                lon,
                lat,
            });
        }
        Ok(())
    }

    /// One hazard site in a block: a point, or for a landfill or a rail
    /// yard in a block large enough, its footprint within the block's
    /// inner part (at most 0.16 of the block's side from a centre at most
    /// 0.04 from the block's middle).
    pub fn hazard_site(&mut self, r: &mut Rng, leaf: Leaf, urban: bool) -> std::io::Result<()> {
        let g = self.g;
        let s = leaf.size() as f64;
        let side_m = 1000.0 * s * (g.dlat * g.lay.km_lat).min(g.dlon * g.lay.km_lon);
        let mut u = r.unit();
        let mut pick = HAZARD_KINDS[HAZARD_KINDS.len() - 1];
        for k in HAZARD_KINDS {
            let share = if urban { k.3 } else { k.2 };
            if u < share {
                pick = k;
                break;
            }
            u -= share;
        }
        let (kind, ending, _, _, footprint) = pick;
        let name = format!("{} {} {ending}", r.pick(&WORDS_A), r.pick(&WORDS_B));
        let limit = 0.16 * side_m;
        let drawn = r.unit() < footprint;
        let geom = if drawn && kind == "landfill" && limit >= 120.0 {
            let (lon, lat) = g.lonlat(
                leaf.x as f64 + s * r.range(0.46, 0.54),
                leaf.y as f64 + s * r.range(0.46, 0.54),
            );
            let radius = r.range(150.0, 450.0).min(limit);
            let n = 14 + r.below(7);
            polygon(vec![star(r, lon, lat, radius, n)])
        } else if drawn && kind == "rail yard" && limit >= 110.0 {
            let (lon, lat) = g.lonlat(
                leaf.x as f64 + s * r.range(0.46, 0.54),
                leaf.y as f64 + s * r.range(0.46, 0.54),
            );
            // A long rectangle: half-length up to 800 m, half-width a
            // fifth of it or less, turned by a random angle; corners
            // counter-clockwise, within `limit` of the centre.
            let half_len = r.range(300.0, 800.0).min(0.98 * limit);
            let half_wid = r.range(0.08, 0.2) * half_len;
            let a = r.range(0.0, std::f64::consts::PI);
            let (c, sn) = (a.cos(), a.sin());
            let mut ring = Vec::with_capacity(10);
            for (x, y) in [(-1.0, -1.0), (1.0, -1.0), (1.0, 1.0), (-1.0, 1.0)] {
                let (dx, dy) = (x * half_len, y * half_wid);
                let (plon, plat) = offset(lon, lat, dx * c - dy * sn, dx * sn + dy * c);
                ring.extend([q7(plon), q7(plat)]);
            }
            close(&mut ring);
            polygon(vec![ring])
        } else {
            let (x, y) = self.inner_point(r, leaf);
            Geometry::point(x, y)
        };
        self.stats.footprints += matches!(geom.shape, Shape::Polygon(_)) as u64;
        self.extent("hazard_sites", &geom);
        let fid = self.hazards.rows + 1;
        self.hazards.write(&[
            &fid.to_string(),
            &format!("HZ{}{fid:05}", self.g.lay.id_prefix),
            &name,
            kind,
            &wkt::write(&geom),
        ])
    }

    /// The libraries: one central library per county in its densest block
    /// (county order), then the branches and bookmobile stops in block
    /// order.
    pub fn write_libraries(&mut self, out: &mut Csv) -> std::io::Result<()> {
        let mut rows = Vec::new();
        for (i, best) in self.densest.iter().enumerate() {
            if let Some((_, leaf)) = *best {
                let mut r = Rng(hash(self.seed, TAG_LIBRARY, -1, i as i64, 0));
                let (lon, lat) = self.inner_point(&mut r, leaf);
                rows.push(LibraryRow {
                    name: format!("{} Central Library", self.g.lay.counties[i].name),
                    branch_type: "central",
                    lon,
                    lat,
                });
            }
        }
        rows.append(&mut self.libraries);
        for row in rows {
            let geom = Geometry::point(row.lon, row.lat);
            self.extent("libraries", &geom);
            let fid = out.rows + 1;
            out.write(&[
                &fid.to_string(),
                &format!("LB{}{fid:05}", self.g.lay.id_prefix),
                &row.name,
                row.branch_type,
                &wkt::write(&geom),
            ])?;
        }
        Ok(())
    }

    /// Parks (about 1 per 65 blocks) and facilities (about 1 per 100 blocks)
    /// placed in a block.
    pub fn spawn(&mut self, leaf: Leaf, urban: bool) -> std::io::Result<()> {
        let g = self.g;
        let s = leaf.size() as f64;
        let block_m = s * g.dlat * g.lay.km_lat * 1000.0;
        let mut r = Rng(hash(self.seed, TAG_PARK, leaf.level as i64, leaf.x, leaf.y));
        if r.unit() < 1.0 / 65.0 {
            let (cx, cy) = (
                leaf.x as f64 + s * r.range(0.3, 0.7),
                leaf.y as f64 + s * r.range(0.3, 0.7),
            );
            let (lon, lat) = g.lonlat(cx, cy);
            let radius = block_m
                * if urban {
                    r.range(0.3, 1.0)
                } else {
                    r.range(0.15, 0.5)
                };
            let name = format!(
                "{} {} {}",
                r.pick(&WORDS_A),
                r.pick(&WORDS_B),
                r.pick(&PARK_KINDS)
            );
            let geom = self.park_shape(&mut r, lon, lat, radius);
            self.write_park(&name, geom)?;
        }
        let mut r = Rng(hash(self.seed, TAG_SITE, leaf.level as i64, leaf.x, leaf.y));
        if r.unit() < 0.01 {
            let (fx, fy) = (
                leaf.x as f64 + s * r.range(0.3, 0.7),
                leaf.y as f64 + s * r.range(0.3, 0.7),
            );
            let (lon, lat) = g.lonlat(fx, fy);
            if r.unit() < 0.55 {
                self.rec_site(&mut r, lon, lat)?;
            } else {
                self.fitness_entry(&mut r, lon, lat)?;
            }
        }
        Ok(())
    }

    /// A star-shaped park of 24-36 vertices around (lon, lat) with radius
    /// `radius` metres; 12% with a pond, 4% in two pieces.
    pub fn park_shape(&mut self, r: &mut Rng, lon: f64, lat: f64, radius: f64) -> Geometry {
        let n = 24 + r.below(13);
        let outer = star(r, lon, lat, radius, n);
        let mut first = vec![outer];
        if r.unit() < 0.12 {
            let a = r.range(0.0, std::f64::consts::TAU);
            let d = radius * r.range(0.0, 0.1);
            let (plon, plat) = offset(lon, lat, d * a.cos(), d * a.sin());
            let (pr, n) = (radius * r.range(0.15, 0.3), 12 + r.below(9));
            let mut pond = star(r, plon, plat, pr, n);
            reverse_ring(&mut pond);
            first.push(pond);
            self.stats.parks_with_holes += 1;
        }
        if r.unit() < 0.04 {
            let a = r.range(0.0, std::f64::consts::TAU);
            let d = 1.7 * radius;
            let (olon, olat) = offset(lon, lat, d * a.cos(), d * a.sin());
            let (sr, n) = (radius * r.range(0.3, 0.45), 16 + r.below(9));
            let second = star(r, olon, olat, sr, n);
            self.stats.multi_parks += 1;
            Geometry::new(
                Dimensions::Xy,
                Shape::MultiPolygon(vec![first, vec![second]]),
            )
        } else {
            polygon(first)
        }
    }

    pub fn write_park(&mut self, name: &str, geom: Geometry) -> std::io::Result<()> {
        self.extent("parks", &geom);
        let mut n = 0;
        geom.for_each_xy(&mut |_, _| n += 1);
        self.stats.max_park_vertices = self.stats.max_park_vertices.max(n);
        let fid = self.parks.rows + 1;
        self.parks.write(&[
            &fid.to_string(),
            &format!("PK{}{fid:05}", self.g.lay.id_prefix),
            name,
            &wkt::write(&geom),
        ])
    }

    pub fn rec_site(&mut self, r: &mut Rng, lon: f64, lat: f64) -> std::io::Result<()> {
        let (activity, ending, category) = ACTIVITIES[r.below(ACTIVITIES.len())];
        let base = format!("{} {}", r.pick(&WORDS_A), r.pick(&WORDS_B));
        let name = format!("{base} {ending}");
        let geom = Geometry::point(q7(lon), q7(lat));
        self.extent("rec_sites", &geom);
        let fid = self.rec.rows + 1;
        let no_name = r.unit() < 0.02;
        let no_activity = r.unit() < 0.03;
        self.rec.write(&[
            &fid.to_string(),
            &format!("RS{}{fid:05}", self.g.lay.id_prefix),
            if no_name { "" } else { &name },
            if no_activity { "" } else { activity },
            &wkt::write(&geom),
        ])?;
        // The same place, listed again by the licensing office 3-18 m away:
        // one registry site in 23 (evenly spread, the first among the first
        // three), which makes about 5% of the licensing list.
        let k = (fid - 1) as f64;
        if ((k + 1.0) / 23.0 + 0.9).floor() > (k / 23.0 + 0.9).floor() {
            let a = r.range(0.0, std::f64::consts::TAU);
            let d = r.range(3.0, 18.0);
            let (dlon, dlat) = offset(lon, lat, d * a.cos(), d * a.sin());
            let business = format!("{} LLC", name.to_uppercase());
            self.stats.duplicates += 1;
            self.write_fitness(Some(&business), Some(category), Some((dlon, dlat)))?;
        }
        Ok(())
    }

    pub fn fitness_entry(&mut self, r: &mut Rng, lon: f64, lat: f64) -> std::io::Result<()> {
        let (category, ending) = CATEGORIES[r.below(CATEGORIES.len())];
        let business = format!("{} {} {}", r.pick(&WORDS_A), r.pick(&WORDS_B), ending);
        let no_business = r.unit() < 0.01;
        let no_category = r.unit() < 0.02;
        // About 1% of licences were never geocoded.
        let place = (r.unit() >= 0.01).then_some((lon, lat));
        self.stats.no_coordinates += place.is_none() as u64;
        self.write_fitness(
            (!no_business).then_some(&business),
            (!no_category).then_some(category),
            place,
        )
    }

    pub fn write_fitness(
        &mut self,
        business: Option<&str>,
        category: Option<&str>,
        place: Option<(f64, f64)>,
    ) -> std::io::Result<()> {
        let fid = self.fitness.rows + 1;
        // Odd multiplier: a bijection of 0..10^6, so licence numbers are
        // unique and look unordered.
        let licence = format!(
            "FL-{}{:06}",
            self.g.lay.id_prefix,
            (fid * 7919 + 104_729) % 1_000_000
        );
        let (lon, lat, text) = match place {
            Some((lon, lat)) => {
                let geom = Geometry::point(q6(lon), q6(lat));
                self.extent("fitness_list", &geom);
                (q6(lon).to_string(), q6(lat).to_string(), wkt::write(&geom))
            }
            None => (String::new(), String::new(), String::new()),
        };
        self.fitness.write(&[
            &fid.to_string(),
            &licence,
            business.unwrap_or(""),
            category.unwrap_or(""),
            &lon,
            &lat,
            &text,
        ])
    }

    /// The three parks every analysis should meet: a long coastal forest
    /// with tens of thousands of vertices (in the national country up to
    /// a few hundred thousand, and inland in states without a coast), one
    /// across a county line and one just across the state line, as the
    /// layout asks.
    pub fn special_parks(&mut self) -> std::io::Result<()> {
        let g = self.g;
        let lay = g.lay;
        let mut r = Rng(hash(self.seed, TAG_SPECIAL, 0, 0, 0));
        // The forest: between two ragged lines that follow the coast 1.5
        // coarse cells inland; both are graphs over latitude, one always west
        // of the other, so the ring is simple.
        if let Some(((lat_a, lat_b), k)) = lay.forest {
            let cell_lon = FINE as f64 * g.dlon;
            let west = ragged(&mut r, k, 0.0, 0.025);
            let east = ragged(&mut r, k, -0.025, 0.025);
            let mut ring = Vec::with_capacity(4 * (k + 2));
            let middle = lay.lon_west + 0.3 * (lay.lon_east - lay.lon_west);
            let inland = |lat: f64| match lay.land {
                Land::EastOfCoast => lay.coast_lon(lat) + 1.5 * cell_lon + 0.01,
                Land::WestOfCoast => lay.coast_lon(lat) - 1.5 * cell_lon - 0.1,
                Land::Everywhere | Land::IslandOnly => middle,
            };
            for (j, e) in east.iter().enumerate() {
                let lat = lat_a + (lat_b - lat_a) * j as f64 / k as f64;
                ring.extend([q7(inland(lat) + 0.06 + e), q7(lat)]);
            }
            for (j, w) in west.iter().enumerate().rev() {
                let lat = lat_a + (lat_b - lat_a) * j as f64 / k as f64;
                ring.extend([q7(inland(lat) + w), q7(lat)]);
            }
            close(&mut ring);
            let name = format!("{} Coast Forest", r.pick(&WORDS_A));
            self.write_park(&name, polygon(vec![ring]))?;
        }
        let Some((mid, line)) = lay.special_parks else {
            return Ok(());
        };

        // Across a county line: centred on the county boundary corner
        // nearest the middle of the state.
        let mut best: Option<(f64, [f64; 2])> = None;
        for side in self.county_sides.iter().flatten() {
            if side.other == 0 {
                continue;
            }
            let p = side.points[0];
            let d = (p[0] - mid.0).powi(2) + (p[1] - mid.1).powi(2);
            if best.is_none_or(|(b, _)| d < b) {
                best = Some((d, p));
            }
        }
        if let Some((_, p)) = best {
            let name = format!("{} {} Regional Park", r.pick(&WORDS_A), r.pick(&WORDS_B));
            let geom = polygon(vec![star(&mut r, p[0], p[1], 900.0, 32)]);
            self.write_park(&name, geom)?;
        }

        // Just across the state line, outside every county.
        let (lon, lat) = offset(line.0, line.1, 1500.0, 0.0);
        let name = format!("{} {} Park", r.pick(&WORDS_A), r.pick(&WORDS_B));
        let geom = polygon(vec![star(&mut r, lon, lat, 700.0, 28)]);
        self.write_park(&name, geom)
    }
}
