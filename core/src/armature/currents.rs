//! The currents an armature needs: to pull in from the open stop, to stay seated.

use super::circuit::MagneticCircuit;
use super::gap::GapInductance;
use super::mechanics::Mechanics;
use crate::error::{Error, in_range};

/// Grid points per gap segment at which a saturating circuit's needed current is evaluated
/// before the largest is refined by golden section.
const GRID: usize = 16;
const GOLDEN: f32 = 0.618_034;

/// The pull-in requirement: the current and the gap where it binds.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct PullIn {
    /// Smallest steady current that closes the armature from the open stop. Units: A.
    pub current_a: f32,
    /// Gap at which that current is needed (the open gap unless a stiff spring makes a
    /// point of the travel harder). Units: m.
    pub gap_m: f32,
}

/// A magnet with its armature mechanics: the minimum pull-in and the must-hold currents.
///
/// # Pull-in and hold
///
/// The magnet pulls with `F(i, x)` ([`MagneticCircuit::pull_force_n`]); the spring and load
/// push open with `F_o(x)` ([`Mechanics::opening_force_n`]). At a steady current `i` the
/// armature travels from the open stop to the closed one only if `F(i, x) > F_o(x)` at every
/// gap of the travel, so the **minimum pull-in current** is `max over x of i_n(x)`, where
/// `F(i_n(x), x) = F_o(x)`. The **must-hold current** is `i_n(x_closed)`: below it the seated
/// armature lifts off. Both are quasi-static: they ignore the armature's momentum, which helps
/// it on through the travel, and the current dip the motion causes (the plant shows both).
///
/// For an unsaturated gap segment where `1/L = a + s·x` and `F_o = A − k·x`,
/// `i_n(x)² = 2·(A − k·x)·(a + s·x)²/s`: a cubic in `x` whose maximum lies at the open end of
/// the segment or at `x* = (2·s·A − k·a)/(3·s·k)`, which is checked when it falls inside. With a
/// reluctance form and the demo valves the open stop binds. With saturation the maximum is
/// found on a grid of 16 points per segment refined by golden section.
///
/// # Examples
///
/// ```
/// use lenz::armature::{Armature, GapInductance, MagneticCircuit, Mechanics};
/// // CHECKS C5.2: L₀ 0.2 H, x₀ 0.5 mm, open gap 2 mm with 1.5 N preload: 0.43301 A to pull in.
/// let magnet = MagneticCircuit::new(
///     GapInductance::Reluctance { zero_gap_h: 0.2, halving_gap_m: 0.5e-3 },
///     None,
/// )?;
/// let mech = Mechanics {
///     open_gap_m: 2.0e-3, closed_gap_m: 0.05e-3,
///     spring_preload_n: 1.5, spring_rate_n_per_m: 500.0, load_n: 0.0,
/// };
/// let a = Armature::new(magnet, mech)?;
/// assert!((a.pull_in_current()?.current_a - 0.433_013).abs() < 2e-6);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct Armature {
    magnet: MagneticCircuit,
    mechanics: Mechanics,
}

impl Armature {
    /// An armature from its magnet and mechanics.
    ///
    /// # Errors
    ///
    /// The errors of [`Mechanics::validate`]; `open_gap_m` or `closed_gap_m` outside the gaps
    /// the magnet's inductance form covers (a table's first to last gap).
    pub fn new(magnet: MagneticCircuit, mechanics: Mechanics) -> Result<Self, Error> {
        let m = mechanics.validate()?;
        let (lo, hi) = magnet.gap().gap_range_m();
        in_range("open_gap_m", m.open_gap_m, lo, hi)?;
        in_range("closed_gap_m", m.closed_gap_m, lo, hi)?;
        Ok(Self {
            magnet,
            mechanics: m,
        })
    }

    /// The magnetic circuit.
    #[must_use]
    pub const fn magnet(&self) -> &MagneticCircuit {
        &self.magnet
    }

    /// The mechanics.
    #[must_use]
    pub const fn mechanics(&self) -> &Mechanics {
        &self.mechanics
    }

    /// The current needed at gap `x` (checked) against the opening force there.
    fn needed_a(&self, x: f32) -> Result<f32, Error> {
        let f = self.mechanics.force_at(x);
        self.magnet.current_for_force_a(f, x).map_err(|e| match e {
            Error::Unreachable { target, limit, .. } => Error::Unreachable {
                param: "opening_force_n",
                target,
                limit,
            },
            other => other,
        })
    }

    /// The minimum pull-in current and the gap where it binds (type docs).
    ///
    /// # Errors
    ///
    /// [`Error::Unreachable`] (`opening_force_n`, with the saturated force limit) when a
    /// saturating magnet cannot overcome the spring and load somewhere on the travel; a
    /// needed current beyond the crate's current range (`force_n`).
    pub fn pull_in_current(&self) -> Result<PullIn, Error> {
        let m = &self.mechanics;
        let (closed, open) = (m.closed_gap_m, m.open_gap_m);
        let mut best = PullIn {
            current_a: self.needed_a(open)?,
            gap_m: open,
        };
        let consider = |x: f32, best: &mut PullIn| -> Result<(), Error> {
            let x = x.clamp(closed, open);
            let i = self.needed_a(x)?;
            if i > best.current_a {
                *best = PullIn {
                    current_a: i,
                    gap_m: x,
                };
            }
            Ok(())
        };
        for (lo, hi) in self.segments() {
            consider(lo, &mut best)?;
            consider(hi, &mut best)?;
            if self.magnet.saturation_flux_vs().is_none() {
                let k = m.spring_rate_n_per_m;
                if k > 0.0 {
                    let p = self.magnet.gap().at(lo);
                    let s = p.reluctance_slope;
                    let a = 1.0 / p.inductance_h - s * lo;
                    let big_a = m.spring_preload_n + m.load_n + k * open;
                    let x_star = (2.0 * s * big_a - k * a) / (3.0 * s * k);
                    if x_star > lo && x_star < hi {
                        consider(x_star, &mut best)?;
                    }
                }
            } else {
                // Grid, then golden section around the largest grid point.
                let step = (hi - lo) / GRID as f32;
                let mut top = (lo, self.needed_a(lo)?);
                for j in 1..=GRID {
                    let x = lo + step * j as f32;
                    let i = self.needed_a(x.min(hi))?;
                    if i > top.1 {
                        top = (x.min(hi), i);
                    }
                }
                let (mut a, mut b) = ((top.0 - step).max(lo), (top.0 + step).min(hi));
                for _ in 0..40 {
                    let c = b - GOLDEN * (b - a);
                    let d = a + GOLDEN * (b - a);
                    if self.needed_a(c)? > self.needed_a(d)? {
                        b = d;
                    } else {
                        a = c;
                    }
                }
                consider(top.0, &mut best)?;
                consider(0.5 * (a + b), &mut best)?;
            }
        }
        Ok(best)
    }

    /// The minimum pull-in current, A ([`Armature::pull_in_current`] without the gap).
    ///
    /// # Errors
    ///
    /// As [`Armature::pull_in_current`].
    pub fn pull_in_current_a(&self) -> Result<f32, Error> {
        Ok(self.pull_in_current()?.current_a)
    }

    /// The must-hold current: the smallest current that keeps the armature seated at the
    /// closed stop against the spring and load, A. Below it the armature drops out.
    ///
    /// # Errors
    ///
    /// [`Error::Unreachable`] (`opening_force_n`) when a saturating magnet cannot hold; a
    /// needed current beyond the crate's current range (`force_n`).
    pub fn hold_current_a(&self) -> Result<f32, Error> {
        self.needed_a(self.mechanics.closed_gap_m)
    }

    /// The gap segments of the travel on which `1/L` is linear: one for the reluctance form,
    /// the table's segments cut to the travel for a table.
    fn segments(&self) -> impl Iterator<Item = (f32, f32)> + '_ {
        let (closed, open) = (self.mechanics.closed_gap_m, self.mechanics.open_gap_m);
        let mut cuts = [0.0f32; super::gap::GAP_TABLE_MAX_POINTS + 1];
        let mut n = 0;
        let mut push = |x: f32| {
            if let Some(c) = cuts.get_mut(n) {
                *c = x;
                n += 1;
            }
        };
        push(closed);
        if let GapInductance::Table(t) = self.magnet.gap() {
            for (x, _) in t.points() {
                if x > closed && x < open {
                    push(x);
                }
            }
        }
        push(open);
        (0..n.saturating_sub(1)).filter_map(move |k| Some((*cuts.get(k)?, *cuts.get(k + 1)?)))
    }

    /// The same armature with its magnet's inductances scaled by `inductance_factor` and other
    /// mechanics (a corner of a spread).
    pub(crate) fn variant(
        &self,
        inductance_factor: f32,
        mechanics: Mechanics,
    ) -> Result<Self, Error> {
        Self::new(self.magnet.scaled(inductance_factor)?, mechanics)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::armature::GapTable;
    use crate::testing::{armature64, isclose};
    use proptest::prelude::*;

    fn magnet(l0: f32, x0: f32, sat: Option<f32>) -> MagneticCircuit {
        MagneticCircuit::new(
            GapInductance::Reluctance {
                zero_gap_h: l0,
                halving_gap_m: x0,
            },
            sat,
        )
        .unwrap()
    }

    #[test]
    fn a_stiff_spring_binds_inside_the_travel() {
        // 2·(P + load) < k·(x_open + x₀): the cubic's maximum lies inside the travel (computed
        // against the f64 scan).
        let mech = Mechanics {
            open_gap_m: 2.0e-3,
            closed_gap_m: 0.0,
            spring_preload_n: 0.1,
            spring_rate_n_per_m: 2000.0,
            load_n: 0.0,
        };
        let a = Armature::new(magnet(0.2, 0.5e-3, None), mech).unwrap();
        let p = a.pull_in_current().unwrap();
        let (want, at) = armature64::pull_in(0.2, 0.5e-3, None, 2e-3, 0.0, 0.1, 2000.0, 0.0);
        assert!(p.gap_m < 2.0e-3 && p.gap_m > 0.0, "{p:?}");
        assert!(
            isclose(p.current_a as f64, want, 1e-5, 0.0),
            "{p:?} vs {want}"
        );
        assert!((p.gap_m as f64 - at).abs() < 2e-6, "{p:?} vs {at}");
    }

    #[test]
    fn unreachable_names_the_opening_force() {
        let mech = Mechanics {
            open_gap_m: 2.0e-3,
            closed_gap_m: 0.05e-3,
            spring_preload_n: 50.0,
            spring_rate_n_per_m: 0.0,
            load_n: 0.0,
        };
        // Saturated limit ln 2 · λ²/(L₀x₀) = 0.693 · 1e-4/1e-4 = 0.69 N < 50 N.
        let a = Armature::new(magnet(0.2, 0.5e-3, Some(0.01)), mech).unwrap();
        assert!(matches!(
            a.pull_in_current(),
            Err(Error::Unreachable {
                param: "opening_force_n",
                ..
            })
        ));
        assert!(matches!(
            a.hold_current_a(),
            Err(Error::Unreachable {
                param: "opening_force_n",
                ..
            })
        ));
        let table = GapTable::new(&[(0.0, 0.2), (1e-3, 0.1)]).unwrap();
        let t = MagneticCircuit::new(GapInductance::Table(table), None).unwrap();
        assert_eq!(
            Armature::new(
                t,
                Mechanics {
                    open_gap_m: 2e-3,
                    ..mech
                }
            )
            .unwrap_err()
            .param(),
            "open_gap_m"
        );
    }

    proptest! {
        // Documented range: L₀ 10 mH ..= 10 H, x₀ 50 µm ..= 5 mm, open gap up to 10·x₀,
        // preload and load 0.1 ..= 20 N, rate 0 ..= 20 kN/m, saturation none or a λ_sat whose
        // limit leaves the forces below 99 % of it.
        #[test]
        fn pull_in_and_hold_match_f64(
            l0 in 1e-2f32..10.0, x0 in 5e-5f32..5e-3, open_frac in 0.2f32..10.0,
            closed_frac in 0.0f32..0.9, preload in 0.1f32..20.0, rate in prop_oneof![Just(0.0f32), 0.0f32..2e4],
            load in 0.0f32..20.0, sat_margin in prop_oneof![Just(None), (1.02f32..20.0).prop_map(Some)],
        ) {
            let open = open_frac * x0;
            let closed = closed_frac * open;
            let mech = Mechanics { open_gap_m: open, closed_gap_m: closed, spring_preload_n: preload, spring_rate_n_per_m: rate, load_n: load };
            let f_max = preload + rate * (open - closed) + load;
            // λ_sat so that the saturated limit is `sat_margin` times the largest opening force.
            let sat = sat_margin.map(|m| libm::sqrtf(m * f_max * l0 * x0 / core::f32::consts::LN_2));
            let a = Armature::new(magnet(l0, x0, sat), mech).unwrap();
            let (want, _) = armature64::pull_in(l0 as f64, x0 as f64, sat.map(f64::from), open as f64, closed as f64, preload as f64, rate as f64, load as f64);
            prop_assume!(want < 1e4);
            let got = a.pull_in_current_a().unwrap() as f64;
            prop_assert!(isclose(got, want, 1e-4, 0.0), "pull-in {got} vs {want}");
            let want_hold = armature64::current_for_force(l0 as f64, x0 as f64, sat.map(f64::from), f_max as f64, closed as f64);
            let got_hold = a.hold_current_a().unwrap() as f64;
            prop_assert!(isclose(got_hold, want_hold, 1e-4, 0.0), "hold {got_hold} vs {want_hold}");
        }
    }
}
