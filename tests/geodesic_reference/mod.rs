//! Shared test helpers: a fixed-seed PRNG and brute-force references built
//! directly on `geographiclib-rs` (positions along a geodesic from
//! `GeodesicLine`, distances from the inverse), independent of the
//! minimisation code under test.
#![allow(dead_code)]

use geographiclib_rs::{
    capability as caps, DirectGeodesic, Geodesic, GeodesicLine, InverseGeodesic,
};

/// xorshift64* (G. Marsaglia, "Xorshift RNGs", J. Stat. Softw. 8(14), 2003;
/// the * multiplier from S. Vigna, 2016; both from memory). Fixed seeds make
/// every run identical.
pub struct XorShift(u64);

impl XorShift {
    pub fn new(seed: u64) -> Self {
        XorShift(seed.max(1))
    }
    pub fn next_u64(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        self.0 = x;
        x.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    /// Uniform in [0, 1).
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }
    pub fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.uniform()
    }
    /// Log-uniform in [lo, hi] (lo > 0).
    pub fn log_range(&mut self, lo: f64, hi: f64) -> f64 {
        (lo.ln() + (hi.ln() - lo.ln()) * self.uniform()).exp()
    }
}

pub fn geod() -> Geodesic {
    Geodesic::wgs84()
}

/// Karney's direct problem from (lon, lat): returns (lon, lat).
pub fn direct(g: &Geodesic, p: (f64, f64), azi: f64, s: f64) -> (f64, f64) {
    let (lat, lon): (f64, f64) = g.direct(p.1, p.0, azi, s);
    (lon, lat)
}

/// Karney's inverse distance between (lon, lat) points.
pub fn dist(g: &Geodesic, p: (f64, f64), q: (f64, f64)) -> f64 {
    g.inverse(p.1, p.0, q.1, q.0)
}

/// Azimuth at p of the geodesic p -> q, degrees.
pub fn azimuth(g: &Geodesic, p: (f64, f64), q: (f64, f64)) -> f64 {
    let (_s, azi1, _azi2, _a12): (f64, f64, f64, f64) = g.inverse(p.1, p.0, q.1, q.0);
    azi1
}

/// A geodesic segment sampled by distance from its first end.
pub struct RefLine {
    pub line: GeodesicLine,
    pub len: f64,
    pub a: (f64, f64),
}

impl RefLine {
    pub fn new(g: &Geodesic, a: (f64, f64), b: (f64, f64)) -> Self {
        let (len, azi1, _azi2, _a12): (f64, f64, f64, f64) = g.inverse(a.1, a.0, b.1, b.0);
        let line = GeodesicLine::new(
            g,
            a.1,
            a.0,
            azi1,
            Some(caps::LATITUDE | caps::LONGITUDE | caps::DISTANCE_IN),
            None,
            None,
        );
        RefLine { line, len, a }
    }
    /// Position (lon, lat) at distance t from the first end.
    pub fn at(&self, t: f64) -> (f64, f64) {
        if self.len == 0.0 {
            return self.a;
        }
        let (_a12, lat, lon, ..) =
            self.line
                ._gen_position(false, t, caps::LATITUDE | caps::LONGITUDE);
        (lon, lat)
    }
}

/// Minimise f over [0, len]: f sampled at n + 1 equally spaced points, then
/// golden-section refinement on both sides of the best sample down to an
/// interval of `tol`, or earlier once the interval w is so small that the
/// minimum cannot lie more than 1 nm below the best value v seen: a distance
/// function along a geodesic has curvature at most about 1 / v near its
/// minimum, so the shortfall is at most w^2 / (2 v) <= 1e-9 m when
/// w^2 <= 2e-9 v (we stop at w^2 <= 1e-9 v, a factor 2 in hand). Returns
/// the least value seen.
pub fn sample_and_golden(f: &mut dyn FnMut(f64) -> f64, len: f64, n: usize, tol: f64) -> f64 {
    if len == 0.0 {
        return f(0.0);
    }
    let mut best = f64::INFINITY;
    let mut ib = 0;
    for i in 0..=n {
        let v = f(len * i as f64 / n as f64);
        if v < best {
            best = v;
            ib = i;
        }
    }
    let h = len / n as f64;
    let mut lo = (ib as f64 * h - h).max(0.0);
    let mut hi = (ib as f64 * h + h).min(len);
    let inv_phi = 0.5 * (5f64.sqrt() - 1.0);
    let mut x1 = hi - inv_phi * (hi - lo);
    let mut x2 = lo + inv_phi * (hi - lo);
    let mut f1 = f(x1);
    let mut f2 = f(x2);
    // The interval cannot shrink below the f64 spacing near `len`.
    let tol = tol.max(4.0 * f64::EPSILON * len);
    let mut iters = 0;
    while hi - lo > tol && (hi - lo) * (hi - lo) > 1e-9 * best.min(f1).min(f2) && iters < 200 {
        iters += 1;
        if f1 < f2 {
            hi = x2;
            x2 = x1;
            f2 = f1;
            x1 = hi - inv_phi * (hi - lo);
            f1 = f(x1);
        } else {
            lo = x1;
            x1 = x2;
            f1 = f2;
            x2 = lo + inv_phi * (hi - lo);
            f2 = f(x2);
        }
    }
    best.min(f1).min(f2)
}

/// Brute-force point-to-segment distance: 64 samples along the geodesic
/// a -> b, golden section to 1e-10 m on both sides of the best.
pub fn brute_psd(g: &Geodesic, p: (f64, f64), seg: &RefLine) -> f64 {
    let mut f = |t: f64| dist(g, seg.at(t), p);
    sample_and_golden(&mut f, seg.len, 64, 1e-10)
}

/// Brute-force segment-to-segment distance, minimising over both segments:
/// outer samples/golden along A, inner brute force along B.
pub fn brute_ssd(g: &Geodesic, sa: &RefLine, sb: &RefLine, n_outer: usize, n_inner: usize) -> f64 {
    let mut outer = |t: f64| {
        let x = sa.at(t);
        let mut inner = |u: f64| dist(g, sb.at(u), x);
        sample_and_golden(&mut inner, sb.len, n_inner, 1e-10)
    };
    sample_and_golden(&mut outer, sa.len, n_outer, 1e-10)
}
