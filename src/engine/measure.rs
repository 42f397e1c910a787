//! Turning field measurements into intervals with stated uncertainty, and
//! the closed-form interval likelihood the engine scores them with.
//!
//! - Scratch tests become a Mohs interval from the reference hardnesses of
//!   the tools (common practice, see [`reference`]).
//! - Hydrostatic weighings become a specific gravity with its propagated
//!   standard uncertainty and a water-density correction.
//! - [`interval_probability`] is the probability that a reading, made with
//!   Gaussian measurement error, falls in the observed interval when the true
//!   value is uniform over an entry's range.

use super::observe::{HardnessObs, Observations, Weighings};

/// Reference hardnesses of field tools on the Mohs scale. These are the
/// figures of common practice (field-guide rules of thumb), not
/// measurements: a fingernail about 2.5, a copper coin about 3.5, a steel
/// knife blade about 5.5 and window glass about 5.5.
pub mod reference {
    /// Fingernail (common practice).
    pub const FINGERNAIL: f64 = 2.5;
    /// Copper coin or wire (common practice).
    pub const COPPER: f64 = 3.5;
    /// Steel knife blade (common practice).
    pub const STEEL: f64 = 5.5;
    /// Window glass (common practice).
    pub const GLASS: f64 = 5.5;
}

/// Measurement error of a Mohs reading, one standard deviation. Judging
/// hardness with tools of loosely known hardness on a flake is good to
/// about half a step (common practice).
pub const HARDNESS_SIGMA: f64 = 0.5;

/// A Mohs value typed as a number is read to the nearest half step, so an
/// observed bound stands for ±0.25 around it (common practice).
pub const HARDNESS_HALF_STEP: f64 = 0.25;

/// Measurement error of a specific gravity read off directly, one standard
/// deviation: a pocket-balance figure without its weighings is good to about
/// ±0.1 (common practice).
pub const SG_VALUE_SIGMA: f64 = 0.1;

/// Method error of hydrostatic weighing beyond the balance resolution (air
/// bubbles, wet surface, thread): about 1 % of the value (common practice).
pub const SG_METHOD_RELATIVE: f64 = 0.01;

/// Default balance readability, grams (contract default).
pub const DEFAULT_RESOLUTION_G: f64 = 0.01;

/// Default water temperature, °C (contract default).
pub const DEFAULT_WATER_TEMP_C: f64 = 20.0;

/// A closed interval, possibly open-ended (±infinity).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Interval {
    /// Lower bound.
    pub lo: f64,
    /// Upper bound.
    pub hi: f64,
}

/// A hardness interval combined from every hardness observation, with a
/// note when those observations disagree.
#[derive(Clone, Debug, PartialEq)]
pub struct HardnessReading {
    /// The interval scored.
    pub interval: Interval,
    /// Plain words on a conflict between hardness, scratch tests and glass.
    pub conflict: Option<String>,
}

/// Combines `hardness`, `scratch` and `scratches_glass` into one interval.
///
/// A tool that scratches the specimen puts an upper bound at its reference
/// hardness; a tool that does not, a lower bound. Bounds that cross are a
/// conflict: the interval is then widened to span both crossing bounds,
/// and the conflict is reported instead of failing.
pub fn hardness_reading(o: &Observations) -> Option<HardnessReading> {
    if !o.has_hardness() {
        return None;
    }
    // (bound, what set it)
    let mut lows: Vec<(f64, &'static str)> = Vec::new();
    let mut highs: Vec<(f64, &'static str)> = Vec::new();
    if let Some(HardnessObs { min, max }) = o.hardness {
        if let Some(v) = min {
            lows.push((v - HARDNESS_HALF_STEP, "the hardness given"));
        }
        if let Some(v) = max {
            highs.push((v + HARDNESS_HALF_STEP, "the hardness given"));
        }
    }
    let mut tool =
        |scratches: Option<bool>, h: f64, what_yes: &'static str, what_no: &'static str| {
            match scratches {
                Some(true) => highs.push((h, what_yes)),
                Some(false) => lows.push((h, what_no)),
                None => {}
            }
        };
    if let Some(s) = o.scratch {
        tool(
            s.fingernail,
            reference::FINGERNAIL,
            "a fingernail scratching it",
            "a fingernail not scratching it",
        );
        tool(
            s.copper,
            reference::COPPER,
            "copper scratching it",
            "copper not scratching it",
        );
        tool(
            s.steel,
            reference::STEEL,
            "steel scratching it",
            "steel not scratching it",
        );
    }
    match o.scratches_glass {
        Some(true) => lows.push((reference::GLASS, "it scratching glass")),
        Some(false) => highs.push((reference::GLASS, "it not scratching glass")),
        None => {}
    }
    let lo = lows
        .iter()
        .copied()
        .fold(None::<(f64, &str)>, |acc, b| match acc {
            Some(a) if a.0 >= b.0 => Some(a),
            _ => Some(b),
        });
    let hi = highs
        .iter()
        .copied()
        .fold(None::<(f64, &str)>, |acc, b| match acc {
            Some(a) if a.0 <= b.0 => Some(a),
            _ => Some(b),
        });
    let lo_v = lo.map_or(f64::NEG_INFINITY, |b| b.0);
    let hi_v = hi.map_or(f64::INFINITY, |b| b.0);
    if lo_v <= hi_v {
        return Some(HardnessReading {
            interval: Interval { lo: lo_v, hi: hi_v },
            conflict: None,
        });
    }
    // Crossing bounds: span them, and say which observations disagree.
    let (l, h) = (lo.map_or("", |b| b.1), hi.map_or("", |b| b.1));
    Some(HardnessReading {
        interval: Interval { lo: hi_v, hi: lo_v },
        conflict: Some(format!(
            "The hardness observations disagree: {l} puts it at {lo_v:.1} or harder, but {h} puts it below {hi_v:.1}. \
             The scores use the span between the two; repeat the scratch tests on a fresh cleavage face."
        )),
    })
}

/// A specific gravity with its standard uncertainty.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SgReading {
    /// Specific gravity (relative to water at 4 °C, i.e. numerically the
    /// density in g/cm³).
    pub value: f64,
    /// Standard uncertainty propagated from the balance resolution, plus the
    /// method error.
    pub sigma: f64,
}

/// Density of air-free water in kg/m³ at `t_c` °C (0 to 40 °C), after
/// M. Tanaka, G. Girard, R. Davis, A. Peuto and N. Bignell, "Recommended
/// table for the density of water between 0 °C and 40 °C based on recent
/// experimental reports", Metrologia 38 (2001) 301–309, equation (1) with
/// its coefficients a1..a5 (ITS-90).
pub fn water_density_kg_m3(t_c: f64) -> f64 {
    const A1: f64 = -3.983_035; // °C
    const A2: f64 = 301.797; // °C
    const A3: f64 = 522_528.9; // °C²
    const A4: f64 = 69.348_81; // °C
    const A5: f64 = 999.974_950; // kg/m³
    A5 * (1.0 - (t_c + A1).powi(2) * (t_c + A2) / (A3 * (t_c + A4)))
}

/// Maximum density of water (Tanaka et al. 2001, a5), the reference for
/// specific gravity.
pub const WATER_MAX_DENSITY_KG_M3: f64 = 999.974_950;

/// Specific gravity from a dry and a submerged weighing (Archimedes):
/// `SG = ρw(T)/ρw,max · a / (a − b)`.
///
/// Each reading carries the standard uncertainty of a digital balance of
/// readability `r`, `r / (2√3)` (a rectangular distribution of half-width
/// r/2, per the GUM, JCGM 100:2008 §4.3.7); the two are propagated to first
/// order: `u(SG) = k·√(a² + b²)·u / (a − b)²`. The method error
/// [`SG_METHOD_RELATIVE`] is added in quadrature.
pub fn sg_from_weighings(w: &Weighings) -> SgReading {
    let a = w.dry_mass_g;
    let b = w.submerged_mass_g;
    let r = w.balance_resolution_g.unwrap_or(DEFAULT_RESOLUTION_G);
    let t = w.water_temp_c.unwrap_or(DEFAULT_WATER_TEMP_C);
    let k = water_density_kg_m3(t) / WATER_MAX_DENSITY_KG_M3;
    let loss = a - b;
    let value = k * a / loss;
    let u = r / (2.0 * 3f64.sqrt());
    let u_balance = k * (a * a + b * b).sqrt() * u / (loss * loss);
    let u_method = SG_METHOD_RELATIVE * value;
    SgReading {
        value,
        sigma: (u_balance * u_balance + u_method * u_method).sqrt(),
    }
}

/// Standard normal cumulative distribution function.
pub fn phi_cdf(x: f64) -> f64 {
    0.5 * libm::erfc(-x / std::f64::consts::SQRT_2)
}

/// Standard normal density.
pub fn phi_pdf(x: f64) -> f64 {
    (-0.5 * x * x).exp() / (2.0 * std::f64::consts::PI).sqrt()
}

/// Beyond this many standard deviations `G` is taken as its asymptote:
/// `G(t) − t` for `t > 9` and `G(t)` for `t < −9` are below 1e-19, far under
/// any likelihood the engine compares (the gross-error terms keep those
/// above 1e-6), and skipping `erfc` and `exp` there saves most of the cost
/// of scoring an entry whose range is far from the reading.
const TAIL: f64 = 9.0;

/// `G(t) = t·Φ(t) + φ(t)`, an antiderivative of Φ.
fn g(t: f64) -> f64 {
    if t > TAIL {
        return t;
    }
    if t < -TAIL {
        return 0.0;
    }
    t * phi_cdf(t) + phi_pdf(t)
}

/// `∫ₐᵇ Φ((c − h)/σ) dh`, the mass of readings below `c` summed over a true
/// value uniform on `[a, b]` (not yet divided by `b − a`).
fn integral_below(c: f64, a: f64, b: f64, sigma: f64) -> f64 {
    if c == f64::INFINITY {
        return b - a;
    }
    if c == f64::NEG_INFINITY {
        return 0.0;
    }
    sigma * (g((c - a) / sigma) - g((c - b) / sigma))
}

/// Probability that a reading falls in `obs` when the true value is uniform
/// on the entry's range `[a, b]` and the reading has Gaussian error `sigma`:
///
/// `P = 1/(b−a) ∫ₐᵇ [Φ((hi−h)/σ) − Φ((lo−h)/σ)] dh`, in closed form through
/// `∫Φ = tΦ(t) + φ(t)`. A zero-width range is the limit, a plain difference
/// of Φ.
pub fn interval_probability(obs: Interval, a: f64, b: f64, sigma: f64) -> f64 {
    let p = if b - a < 1e-9 {
        let cdf = |c: f64| {
            if c == f64::INFINITY {
                1.0
            } else if c == f64::NEG_INFINITY {
                0.0
            } else {
                phi_cdf((c - a) / sigma)
            }
        };
        cdf(obs.hi) - cdf(obs.lo)
    } else {
        (integral_below(obs.hi, a, b, sigma) - integral_below(obs.lo, a, b, sigma)) / (b - a)
    };
    p.clamp(0.0, 1.0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::observe::ScratchObs;

    #[test]
    fn water_density_matches_the_published_table() {
        // Tanaka et al. (2001), Table: 999.9750 kg/m³ at 4 °C, 998.2067 at 20 °C,
        // 995.6488 at 30 °C (values from memory of that table; the formula is its eq. 1).
        assert!((water_density_kg_m3(4.0) - 999.9750).abs() < 0.001);
        assert!((water_density_kg_m3(20.0) - 998.2067).abs() < 0.001);
        assert!((water_density_kg_m3(30.0) - 995.6488).abs() < 0.002);
    }

    #[test]
    fn weighings_give_archimedes_specific_gravity() {
        // 28.30 g dry, 18.10 g submerged at 20 °C: 28.30/10.20 × 0.998232 = 2.770.
        let w = Weighings {
            dry_mass_g: 28.30,
            submerged_mass_g: 18.10,
            balance_resolution_g: None,
            water_temp_c: None,
        };
        let r = sg_from_weighings(&w);
        assert!((r.value - 2.7696).abs() < 0.001, "{}", r.value);
        // Method error dominates: about 1 % of 2.77.
        assert!(r.sigma > 0.027 && r.sigma < 0.03, "{}", r.sigma);
    }

    #[test]
    fn a_coarse_balance_and_a_small_specimen_give_a_wide_uncertainty() {
        let w = Weighings {
            dry_mass_g: 1.0,
            submerged_mass_g: 0.6,
            balance_resolution_g: Some(0.1),
            water_temp_c: Some(20.0),
        };
        let r = sg_from_weighings(&w);
        // u = 0.1/(2√3) = 0.0289; √(1 + 0.36) = 1.166; /0.16 → 0.21 (×k ≈ 0.998).
        assert!((r.sigma - 0.211).abs() < 0.005, "{}", r.sigma);
    }

    #[test]
    fn the_interval_probability_matches_numerical_integration() {
        let cases = [
            (Interval { lo: 2.0, hi: 3.0 }, 2.5, 3.0, 0.5),
            (
                Interval {
                    lo: 5.5,
                    hi: f64::INFINITY,
                },
                2.0,
                2.5,
                0.5,
            ),
            (
                Interval {
                    lo: f64::NEG_INFINITY,
                    hi: 2.5,
                },
                1.0,
                1.5,
                0.3,
            ),
            (Interval { lo: 2.7, hi: 2.9 }, 2.76, 2.88, 0.05),
        ];
        for (obs, a, b, s) in cases {
            let n = 20_000;
            let mut sum = 0.0;
            for i in 0..n {
                let h = a + (b - a) * (i as f64 + 0.5) / n as f64;
                let hi = if obs.hi.is_finite() {
                    phi_cdf((obs.hi - h) / s)
                } else {
                    1.0
                };
                let lo = if obs.lo.is_finite() {
                    phi_cdf((obs.lo - h) / s)
                } else {
                    0.0
                };
                sum += hi - lo;
            }
            let numeric = sum / n as f64;
            let closed = interval_probability(obs, a, b, s);
            assert!(
                (numeric - closed).abs() < 1e-6,
                "{obs:?} {a} {b}: {numeric} vs {closed}"
            );
        }
    }

    #[test]
    fn the_tail_shortcut_agrees_with_the_full_formula() {
        for t in [9.0001f64, 12.0, 40.0] {
            assert!((g(t) - (t * phi_cdf(t) + phi_pdf(t))).abs() < 1e-15, "{t}");
            assert!(
                (g(-t) - (-t * phi_cdf(-t) + phi_pdf(-t))).abs() < 1e-15,
                "{t}"
            );
        }
    }

    #[test]
    fn an_open_interval_over_everything_is_certain() {
        let all = Interval {
            lo: f64::NEG_INFINITY,
            hi: f64::INFINITY,
        };
        assert!((interval_probability(all, 2.0, 3.0, 0.5) - 1.0).abs() < 1e-12);
        assert!((interval_probability(all, 3.0, 3.0, 0.5) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn scratch_tests_bracket_the_hardness() {
        let o = Observations {
            scratch: Some(ScratchObs {
                fingernail: Some(false),
                copper: Some(true),
                steel: None,
            }),
            ..Default::default()
        };
        let r = hardness_reading(&o).expect("has hardness");
        assert_eq!(r.interval, Interval { lo: 2.5, hi: 3.5 });
        assert!(r.conflict.is_none());
    }

    #[test]
    fn glass_puts_a_lower_bound_and_a_conflict_is_reported_not_refused() {
        let o = Observations {
            hardness: Some(HardnessObs {
                min: Some(2.0),
                max: Some(3.0),
            }),
            scratches_glass: Some(true),
            ..Default::default()
        };
        let r = hardness_reading(&o).expect("has hardness");
        assert!(r.conflict.is_some());
        assert_eq!(r.interval, Interval { lo: 3.25, hi: 5.5 });
    }

    #[test]
    fn no_hardness_observation_gives_no_reading() {
        assert!(hardness_reading(&Observations::default()).is_none());
        let empty_scratch = Observations {
            scratch: Some(ScratchObs::default()),
            ..Default::default()
        };
        assert!(hardness_reading(&empty_scratch).is_none());
    }
}
