//! The reference of the armature comparisons: the coupled coil and armature equations in
//! current form, integrated by `ode_solvers` Dop853 (crates.io) with every event located by
//! bisection on fresh Dop853 runs, written independently of the plant. Each electrical
//! topology is `(a, b)` of `dλ/dt = a − b·i`, given by the test from its circuit.
//! Included by `plant_armature.rs` and `plant_coil_armature.rs`.

use lenz_harness::plant::{ArmatureSpec, GapCurve};
use ode_solvers::{Dop853, OutputType, System, Vector3};

/// Sample period of the comparison, s.
pub(crate) const DT: f64 = 20e-6;

#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Mech {
    RestOpen,
    Moving,
    RestClosed,
    Jammed,
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Elec {
    On,
    /// The clamp conducts (until the current is zero).
    Freewheel,
    Idle,
}

/// What happened, in a form both sides can be compared in.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Kind {
    LiftOffOpen,
    ImpactClosed(f64),
    RestClosed,
    LiftOffClosed,
    ImpactOpen(f64),
    RestOpen,
    CurrentZero,
}

impl Kind {
    pub(crate) fn same_kind(&self, o: &Kind) -> bool {
        std::mem::discriminant(self) == std::mem::discriminant(o)
    }
}

/// The reference model's constants, read from the plant's spec.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Model {
    pub(crate) l0: f64,
    pub(crate) x0: f64,
    pub(crate) sat: Option<f64>,
    pub(crate) m: f64,
    pub(crate) open: f64,
    pub(crate) closed: f64,
    pub(crate) preload: f64,
    pub(crate) rate: f64,
    pub(crate) c: f64,
    pub(crate) load: f64,
    pub(crate) e: f64,
    pub(crate) rest: f64,
    /// `(a, b)` of `dλ/dt = a − b·i` with the switch on and with the clamp conducting.
    pub(crate) on: (f64, f64),
    pub(crate) off: (f64, f64),
}

impl Model {
    pub(crate) fn of(a: &ArmatureSpec, on: (f64, f64), off: (f64, f64)) -> Self {
        let GapCurve::Reluctance {
            zero_gap_h,
            halving_gap_m,
        } = a.gap
        else {
            panic!("the reference uses the reluctance form");
        };
        Self {
            l0: zero_gap_h,
            x0: halving_gap_m,
            sat: a.saturation_flux_vs,
            m: a.mass_kg,
            open: a.open_gap_m,
            closed: a.closed_gap_m,
            preload: a.spring_preload_n,
            rate: a.spring_rate_n_per_m,
            c: a.damping_n_s_per_m + a.faults.extra_damping_n_s_per_m,
            load: a.load_n + a.faults.extra_load_n,
            e: a.restitution,
            rest: a.rest_speed_m_s,
            on,
            off,
        }
    }

    /// `L(x)` and `dL/dx`.
    pub(crate) fn l(&self, x: f64) -> (f64, f64) {
        let d = 1.0 + x / self.x0;
        (self.l0 / d, -self.l0 / (self.x0 * d * d))
    }

    /// `∂λ/∂i` and `∂λ/∂x` at current `i`, gap `x`.
    pub(crate) fn partials(&self, i: f64, x: f64) -> (f64, f64) {
        let (l, dl) = self.l(x);
        match self.sat {
            None => (l, i * dl),
            Some(ls) => {
                let ch = (l * i / ls).cosh();
                let sech2 = 1.0 / (ch * ch);
                (l * sech2, i * dl * sech2)
            }
        }
    }

    /// Pull force: `½ i² |dL/dx|`, or `|dL/dx|/L² · λ² · (u tanh u − ln cosh u)`.
    pub(crate) fn pull(&self, i: f64, x: f64) -> f64 {
        let (l, dl) = self.l(x);
        match self.sat {
            None => 0.5 * i * i * -dl,
            Some(ls) => {
                let u = (l * i / ls).abs();
                let g = if u < 1e-3 {
                    0.5 * u * u
                } else {
                    u * u.tanh() - u.cosh().ln()
                };
                -dl / (l * l) * ls * ls * g
            }
        }
    }

    pub(crate) fn opening(&self, x: f64) -> f64 {
        self.preload + self.rate * (self.open - x) + self.load
    }

    pub(crate) fn rhs(&self, mech: Mech, elec: Elec, y: &Vector3<f64>) -> Vector3<f64> {
        let (i, x, v) = (y[0], y[1], y[2]);
        let moving = mech == Mech::Moving;
        let (a, b) = match elec {
            Elec::On => self.on,
            Elec::Freewheel => self.off,
            Elec::Idle => (0.0, 0.0),
        };
        let (li, lx) = self.partials(i, x);
        let vv = if moving { v } else { 0.0 };
        let di = if elec == Elec::Idle {
            0.0
        } else {
            (a - b * i - lx * vv) / li
        };
        let dv = if moving {
            (self.opening(x) - self.pull(i, x) - self.c * v) / self.m
        } else {
            0.0
        };
        Vector3::new(di, vv, dv)
    }

    pub(crate) fn g(&self, mech: Mech, elec: Elec, y: &Vector3<f64>) -> [f64; 3] {
        let (i, x) = (y[0], y[1]);
        let e0 = if elec == Elec::Freewheel { i } else { 1.0 };
        let (e1, e2) = match mech {
            Mech::Moving => (x - self.closed, self.open - x),
            Mech::RestOpen => (self.opening(self.open) - self.pull(i, self.open), 1.0),
            Mech::RestClosed => (self.pull(i, self.closed) - self.opening(self.closed), 1.0),
            Mech::Jammed => (1.0, 1.0),
        };
        [e0, e1, e2]
    }
}

/// One segment of the reference: the equations of a mode, stopping at the first step where
/// an event function changes sign.
pub(crate) struct Segment {
    pub(crate) model: Model,
    pub(crate) mech: Mech,
    pub(crate) elec: Elec,
    pub(crate) g0: [f64; 3],
}

impl System<f64, Vector3<f64>> for Segment {
    fn system(&self, _t: f64, y: &Vector3<f64>, dy: &mut Vector3<f64>) {
        *dy = self.model.rhs(self.mech, self.elec, y);
    }

    fn solout(&mut self, _t: f64, y: &Vector3<f64>, _dy: &Vector3<f64>) -> bool {
        let g = self.model.g(self.mech, self.elec, y);
        (0..3).any(|j| self.g0[j] >= 0.0 && g[j] < 0.0)
    }
}

/// The reference simulation: switch on at 0, off at `t_off`, samples every `DT` to `t_end`.
pub(crate) struct Reference {
    pub(crate) model: Model,
    pub(crate) t: f64,
    pub(crate) y: Vector3<f64>,
    pub(crate) mech: Mech,
    pub(crate) elec: Elec,
    pub(crate) events: Vec<(f64, Kind)>,
}

impl Reference {
    pub(crate) fn new(model: Model, jammed: bool) -> Self {
        Self {
            model,
            t: 0.0,
            y: Vector3::new(0.0, model.open, 0.0),
            mech: if jammed { Mech::Jammed } else { Mech::RestOpen },
            elec: Elec::Idle,
            events: Vec::new(),
        }
    }

    pub(crate) fn solve(
        &self,
        y0: Vector3<f64>,
        t0: f64,
        t1: f64,
        stop: bool,
    ) -> (Vec<f64>, Vec<Vector3<f64>>) {
        let seg = Segment {
            model: self.model,
            mech: self.mech,
            elec: self.elec,
            g0: if stop {
                self.model.g(self.mech, self.elec, &y0)
            } else {
                [-1.0; 3]
            },
        };
        let mut s = Dop853::new(seg, t0, t1, t1 - t0, y0, 1e-13, 1e-16);
        s.set_output(OutputType::Sparse);
        s.integrate().expect("reference integrates");
        (s.x_out().clone(), s.y_out().clone())
    }

    pub(crate) fn settle(&mut self) {
        let m = self.model;
        let i = self.y[0];
        match self.mech {
            Mech::RestOpen if m.pull(i, m.open) > m.opening(m.open) => {
                self.mech = Mech::Moving;
                self.events.push((self.t, Kind::LiftOffOpen));
            }
            Mech::RestClosed if m.pull(i, m.closed) < m.opening(m.closed) => {
                self.mech = Mech::Moving;
                self.events.push((self.t, Kind::LiftOffClosed));
            }
            _ => {}
        }
    }

    pub(crate) fn impact(&mut self, closed: bool) {
        let m = self.model;
        let v_in = self.y[2];
        self.y[1] = if closed { m.closed } else { m.open };
        let speed = v_in.abs();
        self.events.push((
            self.t,
            if closed {
                Kind::ImpactClosed(speed)
            } else {
                Kind::ImpactOpen(speed)
            },
        ));
        let v_out = -m.e * v_in;
        if v_out.abs() < m.rest {
            self.y[2] = 0.0;
            self.mech = if closed {
                Mech::RestClosed
            } else {
                Mech::RestOpen
            };
            self.events.push((
                self.t,
                if closed {
                    Kind::RestClosed
                } else {
                    Kind::RestOpen
                },
            ));
            self.settle();
        } else {
            self.y[2] = v_out;
        }
    }

    /// Advances to `t1`, handling every event on the way.
    pub(crate) fn advance(&mut self, t1: f64) {
        while self.t < t1 {
            if self.elec == Elec::Idle && self.mech != Mech::Moving {
                self.t = t1;
                return;
            }
            let (ts, ys) = self.solve(self.y, self.t, t1, true);
            let n = ts.len();
            let yb = ys[n - 1];
            let g0 = self.model.g(self.mech, self.elec, &self.y);
            let gb = self.model.g(self.mech, self.elec, &yb);
            let fired: Vec<usize> = (0..3).filter(|&j| g0[j] >= 0.0 && gb[j] < 0.0).collect();
            if fired.is_empty() {
                self.t = t1;
                self.y = yb;
                continue;
            }
            // Bisection on the step that crossed, each trial a fresh run from its start.
            let (ta, ya) = (ts[n - 2], ys[n - 2]);
            let (mut lo, mut hi) = (0.0, ts[n - 1] - ta);
            let mut y_hi = yb;
            let mut which = fired[0];
            for _ in 0..100 {
                let mid = 0.5 * (lo + hi);
                if mid <= lo || mid >= hi {
                    break;
                }
                let (_, yy) = self.solve(ya, ta, ta + mid, false);
                let ym = *yy.last().unwrap();
                let gm = self.model.g(self.mech, self.elec, &ym);
                if let Some(j) = (0..3).find(|&j| g0[j] >= 0.0 && gm[j] < 0.0) {
                    hi = mid;
                    y_hi = ym;
                    which = j;
                } else {
                    lo = mid;
                }
            }
            self.t = ta + hi;
            self.y = y_hi;
            match (which, self.mech) {
                (0, _) => {
                    self.y[0] = 0.0;
                    self.elec = Elec::Idle;
                    self.events.push((self.t, Kind::CurrentZero));
                    self.settle();
                }
                (1, Mech::Moving) => self.impact(true),
                (2, Mech::Moving) => self.impact(false),
                (1, Mech::RestOpen) => {
                    self.mech = Mech::Moving;
                    self.y[2] = 0.0;
                    self.events.push((self.t, Kind::LiftOffOpen));
                }
                (1, Mech::RestClosed) => {
                    self.mech = Mech::Moving;
                    self.y[2] = 0.0;
                    self.events.push((self.t, Kind::LiftOffClosed));
                }
                other => panic!("unexpected event {other:?}"),
            }
        }
    }

    pub(crate) fn switch(&mut self, on: bool) {
        self.elec = if on {
            Elec::On
        } else if self.y[0] > 0.0 {
            Elec::Freewheel
        } else {
            Elec::Idle
        };
        self.settle();
    }
}
