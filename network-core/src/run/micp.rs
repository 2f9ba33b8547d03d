//! Simulated mercury injection (MICP): mercury invades the evacuated
//! network from every external face as the pressure rises, and the
//! mercury saturation is recorded at pressure steps spaced evenly in
//! `log P`, as a laboratory porosimeter reports them.
//!
//! # Convention of the contact angle
//!
//! The engine measures contact angles through the defending (wetting)
//! phase. Mercury is the non-wetting, invading phase and its angle is
//! quoted through mercury, `θ_Hg = 140°` (common practice, with
//! `σ = 0.485 N/m` for mercury against air or vacuum). The angle through
//! the defending phase is therefore `θ = 180° − θ_Hg = 40°`, and
//! `cos θ = |cos θ_Hg|`: the entry pressure of a circular throat of radius
//! `r` is the Washburn (1921, Phys. Rev. 17:273–283) relation
//!
//! ```text
//! P_c = 2 σ |cos θ_Hg| / r .
//! ```
//!
//! Angular elements enter at their MS-P pressure
//! ([`crate::capillary::drainage_entry_pc`]) with the same angle, and keep
//! the defending phase in their corners until the pressure rises further.
//!
//! # What differs from an oil–water drainage
//!
//! - Mercury enters through every external face
//!   ([`DrainageFaces::All`]), the way a core plug sits in mercury.
//! - The defending phase is a vacuum: it is never trapped
//!   ([`Engine::set_water_trapping`]), so at high pressure mercury reaches
//!   every element connected to a face.
//! - Clay (microporosity) volume stays mercury-free: it counts in the pore
//!   volume and holds the mercury saturation below 1.
//!
//! # The pore-throat size distribution
//!
//! Each pressure step is turned into the radius a circular throat would
//! have to enter at it, `r = 2 σ |cos θ_Hg| / P_c` (the Washburn radius).
//! Between steps `k − 1` and `k` the distribution is the mercury volume
//! that entered per decade of radius, as a fraction of the pore volume:
//! `dS/dlog₁₀r = (S_k − S_{k−1}) / (log₁₀ r_{k−1} − log₁₀ r_k)`, reported
//! on row `k` (0 on the first row).

use serde::{Deserialize, Serialize};

use crate::engine::{Engine, Setup, advance_to};
use crate::geometry::Geometry;
use crate::network::Network;
use crate::params::WettabilitySpec;
use crate::params::{DrainageFaces, ImbibitionFaces, MechanismOptions, OutletRule};
use crate::wettability::ContactAngles;

/// Mercury–air interfacial tension, N/m (common practice).
pub const MERCURY_SIGMA_N_PER_M: f64 = 0.485;
/// Contact angle of mercury on rock measured through mercury, degrees
/// (common practice).
pub const MERCURY_CONTACT_ANGLE_DEG: f64 = 140.0;
/// Pascals per pound-force per square inch (exact by the definitions of
/// the pound-force and the inch).
pub const PA_PER_PSI: f64 = 6_894.757_293_168_361;

/// Parameters of a simulated mercury injection.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MicpSpec {
    /// Mercury interfacial tension σ, N/m (default 0.485).
    pub sigma_n_per_m: f64,
    /// Contact angle measured through mercury, degrees, in (90, 180]
    /// (default 140).
    pub contact_angle_deg: f64,
    /// First pressure step, Pa (default 6 894.76 Pa = 1 psi).
    pub pressure_min_pa: f64,
    /// Last pressure step, Pa (default 413.7 MPa = 60 000 psi).
    pub pressure_max_pa: f64,
    /// Number of pressure steps, evenly spaced in `log P` (default 120).
    pub steps: usize,
    /// Seed of the triangle shapes of the network's geometry.
    pub seed: u64,
}

impl Default for MicpSpec {
    fn default() -> Self {
        MicpSpec {
            sigma_n_per_m: MERCURY_SIGMA_N_PER_M,
            contact_angle_deg: MERCURY_CONTACT_ANGLE_DEG,
            pressure_min_pa: PA_PER_PSI,
            pressure_max_pa: 60_000.0 * PA_PER_PSI,
            steps: 120,
            seed: 1,
        }
    }
}

/// A [`MicpSpec`] value outside its allowed range.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum MicpError {
    /// A parameter is outside its range.
    #[error("mercury injection: {name} = {value} is outside the allowed range ({expected})")]
    BadParameter {
        /// Parameter name.
        name: &'static str,
        /// The value given.
        value: f64,
        /// The allowed range.
        expected: &'static str,
    },
}

impl MicpSpec {
    /// Checks every parameter.
    pub fn validate(&self) -> Result<(), MicpError> {
        let bad = |name, value, expected| {
            Err(MicpError::BadParameter {
                name,
                value,
                expected,
            })
        };
        let s = self.sigma_n_per_m;
        if !(s.is_finite() && s > 0.0 && s < 10.0) {
            return bad("sigma_n_per_m", s, "(0, 10) N/m");
        }
        let t = self.contact_angle_deg;
        if !(t.is_finite() && t > 90.0 && t <= 180.0) {
            return bad("contact_angle_deg", t, "(90, 180] degrees through mercury");
        }
        let lo = self.pressure_min_pa;
        if !(lo.is_finite() && lo > 0.0) {
            return bad("pressure_min_pa", lo, "> 0 Pa");
        }
        let hi = self.pressure_max_pa;
        if !(hi.is_finite() && hi > lo) {
            return bad("pressure_max_pa", hi, "> pressure_min_pa");
        }
        if !(2..=100_000).contains(&self.steps) {
            return bad("steps", self.steps as f64, "2 to 100000");
        }
        Ok(())
    }

    /// `|cos θ_Hg|`, the cosine of the angle through the defending phase.
    pub fn cos_theta(&self) -> f64 {
        (self.contact_angle_deg.to_radians()).cos().abs()
    }

    /// The Washburn radius entered at pressure `pc_pa`:
    /// `r = 2 σ |cos θ_Hg| / P_c`, m.
    pub fn washburn_radius(&self, pc_pa: f64) -> f64 {
        2.0 * self.sigma_n_per_m * self.cos_theta() / pc_pa
    }

    /// The pressure steps, evenly spaced in `log P` from the first to the
    /// last (both included), Pa.
    pub fn pressures(&self) -> Vec<f64> {
        let n = self.steps.max(2);
        let (lo, hi) = (self.pressure_min_pa, self.pressure_max_pa);
        (0..n)
            .map(|k| {
                if k == 0 {
                    lo
                } else if k == n - 1 {
                    hi
                } else {
                    lo * (hi / lo).powf(k as f64 / (n - 1) as f64)
                }
            })
            .collect()
    }
}

/// One recorded step of a mercury injection.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MicpPoint {
    /// Injection pressure (capillary pressure), Pa.
    pub pressure_pa: f64,
    /// Mercury saturation, fraction of the pore volume (clay included).
    pub mercury_saturation: f64,
    /// Washburn radius of the step, m.
    pub throat_radius_m: f64,
    /// Mercury that entered since the previous step per decade of radius,
    /// fraction of the pore volume (0 on the first step).
    pub ds_dlog10_r: f64,
}

/// A simulated mercury-injection curve.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MicpCurve {
    /// The parameters used.
    pub spec: MicpSpec,
    /// The steps in order of rising pressure.
    pub points: Vec<MicpPoint>,
    /// Porosity of the network.
    pub porosity: f64,
    /// Lowest pressure at which mercury entered any element, Pa (`None`
    /// when none entered within the range).
    pub first_entry_pa: Option<f64>,
}

impl MicpCurve {
    /// Mercury saturation at pressure `pc_pa`, interpolated linearly in
    /// `log P` between steps (0 below the first step, the last value above
    /// the last).
    pub fn saturation_at(&self, pc_pa: f64) -> f64 {
        interpolate_log(&self.points, pc_pa)
    }
}

fn interpolate_log(points: &[MicpPoint], pc: f64) -> f64 {
    let Some(first) = points.first() else {
        return 0.0;
    };
    if pc < first.pressure_pa {
        return 0.0;
    }
    for w in points.windows(2) {
        let (a, b) = (&w[0], &w[1]);
        if pc <= b.pressure_pa {
            let f = (pc / a.pressure_pa).ln() / (b.pressure_pa / a.pressure_pa).ln();
            return a.mercury_saturation + f * (b.mercury_saturation - a.mercury_saturation);
        }
    }
    points[points.len() - 1].mercury_saturation
}

/// Simulates a mercury injection into `network` (see the module
/// documentation for the physics and conventions).
pub fn simulate_micp(network: &Network, spec: &MicpSpec) -> Result<MicpCurve, MicpError> {
    spec.validate()?;
    let geometry = Geometry::new(network, spec.seed);
    // The angle through the defending phase, 180° − θ_Hg.
    let through_defender = 180.0 - spec.contact_angle_deg;
    let wettability = WettabilitySpec {
        receding_contact_angle_deg: [through_defender, through_defender],
        advancing_contact_angle_deg: [through_defender, through_defender],
        ..WettabilitySpec::default()
    };
    let angles = ContactAngles::intrinsic(&wettability, network.n_elements(), spec.seed);
    let setup = Setup {
        network,
        geometry: &geometry,
        sigma: spec.sigma_n_per_m,
        outlet: OutletRule::Open,
        imbibition_faces: ImbibitionFaces::Outlet,
        mechanisms: MechanismOptions::default(),
        seed: spec.seed,
    };
    let mut engine = Engine::new(setup, angles);
    engine.set_drainage_faces(DrainageFaces::All);
    engine.set_water_trapping(false);
    engine.begin_drainage();
    let first_entry = engine
        .next_threshold()
        .filter(|&p| p <= spec.pressure_max_pa);
    let mut points: Vec<MicpPoint> = Vec::with_capacity(spec.steps);
    for pc in spec.pressures() {
        advance_to(&mut engine, pc, |_| {});
        let s = engine.saturation().tidy().sn;
        let r = spec.washburn_radius(pc);
        let ds = match points.last() {
            Some(prev) => (s - prev.mercury_saturation) / (prev.throat_radius_m / r).log10(),
            None => 0.0,
        };
        points.push(MicpPoint {
            pressure_pa: pc,
            mercury_saturation: s,
            throat_radius_m: r,
            ds_dlog10_r: ds,
        });
    }
    engine.end_drainage();
    Ok(MicpCurve {
        spec: spec.clone(),
        points,
        porosity: network.porosity(),
        first_entry_pa: first_entry,
    })
}

/// A measured mercury-injection curve (read by
/// `crate::io::lab_curve::read_measured_micp`).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MeasuredMicp {
    /// Injection pressures, Pa, strictly increasing.
    pub pressure_pa: Vec<f64>,
    /// Mercury saturations, fraction of the pore volume.
    pub mercury_saturation: Vec<f64>,
}

impl MeasuredMicp {
    /// Root-mean-square difference in mercury saturation between this
    /// curve and `simulated`, over the measured pressures that lie inside
    /// the simulated pressure range (the simulated curve is interpolated in
    /// `log P`). `None` when no measured pressure lies in that range.
    pub fn rms_misfit(&self, simulated: &MicpCurve) -> Option<f64> {
        let (lo, hi) = match (simulated.points.first(), simulated.points.last()) {
            (Some(a), Some(b)) => (a.pressure_pa, b.pressure_pa),
            _ => return None,
        };
        let mut sum = 0.0;
        let mut n = 0usize;
        for (&p, &s) in self.pressure_pa.iter().zip(&self.mercury_saturation) {
            if p >= lo && p <= hi {
                let d = simulated.saturation_at(p) - s;
                sum += d * d;
                n += 1;
            }
        }
        (n > 0).then(|| (sum / n as f64).sqrt())
    }
}
