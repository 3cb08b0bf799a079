//! The waveform plot of one scenario: full-run panels (coil current with the firmware's
//! estimate, switch voltage, output and supply voltage, the drive; for a motor run the winding
//! current, the rotor speed and the bus voltage instead of the first three) and a zoomed panel
//! around each switch-off (demand off) and each fault.
//!
//! The switch voltage and the coil current are drawn as a band from their lowest to their
//! highest value between two recorded points (the envelope the closed loop records from the
//! plant), with the sampled value as a line inside it: during PWM hold the band spans the
//! on and off levels, and a spike between samples still reaches the band's top. Marks:
//! demand changes grey, faults and load or supply steps orange, trips red with their time and
//! the fault before them.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::Outcome;
use super::svg::{FONT, MAX_POINTS, envelope, err, event_label, mark_color, span};
use crate::closed_loop::{RunEvent, Waveform};

const WIDTH: u32 = 960;
/// At most this many zoomed panels per plot (the first ones in time), so a plot stays small
/// however many faults a scenario has.
pub const MAX_ZOOMS: usize = 8;

const BLUE: RGBColor = RGBColor(31, 90, 180);
const PURPLE: RGBColor = RGBColor(120, 40, 160);
const GREEN: RGBColor = RGBColor(20, 150, 60);
const GREY: RGBColor = RGBColor(100, 100, 100);
const ESTIMATE: RGBColor = RGBColor(220, 60, 40);
const DRIVE: RGBColor = RGBColor(40, 40, 40);

/// A line, or a band between two series (`lo`, `hi`) with a line inside.
struct Trace<'a> {
    label: &'a str,
    values: &'a [f64],
    band: Option<(&'a [f64], &'a [f64])>,
    color: RGBColor,
    /// Drawn as steps (the value holds until the next point).
    steps: bool,
}

impl<'a> Trace<'a> {
    fn line(label: &'a str, values: &'a [f64], color: RGBColor) -> Self {
        Trace {
            label,
            values,
            band: None,
            color,
            steps: false,
        }
    }
}

/// The edge of a band at the plot's resolution: `pts` (in time order) cut into `max` runs of
/// equal length, each giving its highest point (`upper`) or its lowest, so the band drawn from
/// at most `max` points still reaches every extreme.
fn band_edge(pts: Vec<(f64, f64)>, max: usize, upper: bool) -> Vec<(f64, f64)> {
    if pts.len() <= max {
        return pts;
    }
    let per = pts.len().div_ceil(max.max(1));
    pts.chunks(per)
        .filter_map(|c| {
            c.iter().copied().reduce(|a, b| {
                if (b.1 > a.1) == upper && b.1 != a.1 {
                    b
                } else {
                    a
                }
            })
        })
        .collect()
}

/// The indices of `t_ms` within `[a, b]`.
fn window(t_ms: &[f64], a: f64, b: f64) -> std::ops::Range<usize> {
    let lo = t_ms.partition_point(|&t| t < a);
    let hi = t_ms.partition_point(|&t| t <= b);
    lo..hi.max(lo)
}

fn slice(v: &[f64], r: &std::ops::Range<usize>) -> Vec<f64> {
    v.get(r.clone()).map_or_else(Vec::new, <[f64]>::to_vec)
}

/// The fault (or supply or load step) most recently before `t_s`, as its short label.
fn cause_before(events: &[RunEvent], t_s: f64) -> Option<String> {
    events
        .iter()
        .rev()
        .find(|e| e.what.starts_with("fault") && e.t_s <= t_s + 1e-12)
        .map(|e| {
            let kind = e
                .what
                .trim_start_matches("fault ")
                .split([' ', '{'])
                .next()
                .unwrap_or("");
            format!("{} {kind}", event_label(&e.what))
        })
}

/// The text of a trip mark: "trip at 12.35 ms" and what preceded it.
#[must_use]
pub fn trip_text(events: &[RunEvent], t_s: f64) -> String {
    match cause_before(events, t_s) {
        Some(c) => format!("at {:.3} ms, after {c}", t_s * 1e3),
        None => format!("at {:.3} ms, no fault before it", t_s * 1e3),
    }
}

#[allow(clippy::too_many_arguments)]
fn panel(
    area: &DrawingArea<SVGBackend<'_>, Shift>,
    title: &str,
    y_desc: &str,
    t_ms: &[f64],
    (x0, x1): (f64, f64),
    traces: &[Trace<'_>],
    fixed_y: Option<(f64, f64)>,
    events: &[RunEvent],
) -> Result<(), String> {
    let (y0, y1) = fixed_y.unwrap_or_else(|| {
        span(traces.iter().flat_map(|s| {
            let band = s
                .band
                .map(|(lo, hi)| lo.iter().chain(hi.iter()))
                .into_iter()
                .flatten();
            s.values.iter().chain(band).copied()
        }))
    });
    let mut builder = ChartBuilder::on(area);
    builder.margin(6);
    if !title.is_empty() {
        builder.caption(title, (FONT, 14));
    }
    let mut chart = builder
        .x_label_area_size(30)
        .y_label_area_size(62)
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(err)?;
    chart
        .configure_mesh()
        .x_desc("Time (ms)")
        .y_desc(y_desc)
        .label_style((FONT, 11))
        .draw()
        .map_err(err)?;
    for e in events
        .iter()
        .filter(|e| e.t_s * 1e3 >= x0 && e.t_s * 1e3 <= x1)
    {
        let t = e.t_s * 1e3;
        let c = mark_color(e);
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(t, y0), (t, y1)],
                c.stroke_width(if e.what.starts_with("trip") { 2 } else { 1 }),
            )))
            .map_err(err)?;
        if e.what.starts_with("trip") {
            // Trip labels (with the cause, when the firmware gives one) sit lower than the
            // others, so the two never overlap.
            let y = y0 + 0.9 * (y1 - y0);
            chart
                .draw_series([
                    Text::new(e.what.clone(), (t, y), (FONT, 11).into_font().color(&c)),
                    Text::new(
                        trip_text(events, e.t_s),
                        (t, y0 + 0.78 * (y1 - y0)),
                        (FONT, 10).into_font().color(&c),
                    ),
                ])
                .map_err(err)?;
        } else if let Some(report) = e.what.strip_prefix("firmware: ") {
            // The firmware's armature reports (the detection marks).
            chart
                .draw_series(std::iter::once(Text::new(
                    report.to_string(),
                    (t, y0 + 0.62 * (y1 - y0)),
                    (FONT, 10).into_font().color(&c),
                )))
                .map_err(err)?;
        } else if e.what.starts_with("fault") {
            chart
                .draw_series(std::iter::once(Text::new(
                    event_label(&e.what),
                    (t, y1),
                    (FONT, 11).into_font().color(&c),
                )))
                .map_err(err)?;
        }
    }
    for s in traces {
        let c = s.color;
        if let Some((lo, hi)) = s.band {
            let finite = |v: &[f64]| -> Vec<(f64, f64)> {
                t_ms.iter()
                    .zip(v)
                    .filter(|(_, v)| v.is_finite())
                    .map(|(t, v)| (*t, *v))
                    .collect()
            };
            let top = band_edge(finite(hi), MAX_POINTS / 2, true);
            let mut poly = top.clone();
            let n_hi = poly.len();
            poly.extend(
                band_edge(finite(lo), MAX_POINTS / 2, false)
                    .into_iter()
                    .rev(),
            );
            if n_hi > 0 && poly.len() > n_hi {
                chart
                    .draw_series(std::iter::once(Polygon::new(poly, c.mix(0.25).filled())))
                    .map_err(err)?;
                chart
                    .draw_series(LineSeries::new(top, c.mix(0.5).stroke_width(1)))
                    .map_err(err)?
                    .label(format!("{}: min..max between samples", s.label))
                    .legend(move |(x, y)| {
                        Rectangle::new([(x, y - 4), (x + 18, y + 4)], c.mix(0.25).filled())
                    });
            }
        }
        let mut pts: Vec<(f64, f64)> = Vec::with_capacity(t_ms.len() * 2);
        for (k, (t, v)) in t_ms.iter().zip(s.values).enumerate() {
            if !v.is_finite() {
                continue;
            }
            if s.steps
                && let Some(&(_, prev)) = pts.last()
                && prev != *v
                && k > 0
            {
                pts.push((*t, prev));
            }
            pts.push((*t, *v));
        }
        if pts.is_empty() {
            continue;
        }
        let pts = envelope(pts, MAX_POINTS);
        chart
            .draw_series(LineSeries::new(pts, c.stroke_width(1)))
            .map_err(err)?
            .label(if s.band.is_some() {
                format!("{} at the sampling instants", s.label)
            } else {
                s.label.to_string()
            })
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], c.stroke_width(2)));
    }
    // The zoomed panels are narrow: the full-width panels above carry the legend.
    if area.dim_in_pixel().0 > WIDTH / 2 {
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .label_font((FONT, 10))
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .draw()
            .map_err(err)?;
    }
    Ok(())
}

/// The switch-offs (demand off) and faults to zoom on, in time order, at most [`MAX_ZOOMS`].
#[must_use]
pub fn zoom_events(events: &[RunEvent]) -> Vec<&RunEvent> {
    let mut z: Vec<&RunEvent> = events
        .iter()
        .filter(|e| e.what == "demand off" || e.what.starts_with("fault"))
        .collect();
    z.truncate(MAX_ZOOMS);
    z
}

/// The time span of the zoomed panel of an event at `t` (ms): from 5 recorded points before
/// it until the current (its envelope's top) has fallen below 2 % of its highest value after
/// the event, plus 10 points; at least 20 points and at most an eighth of the run long.
#[must_use]
pub fn zoom_span(t_ms: &[f64], current_max_a: &[f64], t: f64) -> (f64, f64) {
    let first = t_ms.first().copied().unwrap_or(0.0);
    let run = (t_ms.last().copied().unwrap_or(1.0) - first).max(1e-6);
    let step = t_ms.get(1).map_or(run / 100.0, |b| b - first).max(1e-9);
    let longest = t + run / 8.0;
    let r = window(t_ms, t, longest);
    let after = |k: &usize| {
        let v = current_max_a.get(*k).copied().unwrap_or(f64::NAN);
        if v.is_finite() { v.abs() } else { 0.0 }
    };
    let peak = r.clone().map(|k| after(&k)).fold(0.0, f64::max);
    let settled = if peak > 0.0 { r.clone() } else { 0..0 }
        .find(|k| after(k) < 0.02 * peak && t_ms.get(*k).is_some_and(|&x| x > t))
        .and_then(|k| t_ms.get(k).copied())
        .unwrap_or(if peak > 0.0 { longest } else { t });
    let end = (settled + 10.0 * step).clamp(t + 20.0 * step, longest.max(t + 20.0 * step));
    (t - 5.0 * step, end)
}

fn current_name(w: &Waveform) -> (&'static str, &'static str) {
    if w.estimate_a.iter().any(|v| v.is_finite()) {
        (
            "coil current and the firmware's estimate",
            "Coil current (A)",
        )
    } else {
        ("inductor current", "Inductor current (A)")
    }
}

/// The plot (module docs).
///
/// # Errors
///
/// Drawing failed (a message).
pub fn waveform_svg(o: &Outcome) -> Result<String, String> {
    let w = &o.result.waveform;
    let ev = &o.result.events;
    let t_ms: Vec<f64> = w.t_s.iter().map(|t| t * 1e3).collect();
    let zooms = zoom_events(ev);
    let zoom_rows = zooms.len().div_ceil(2) as u32;
    let (title_h, big_h, drive_h, zoom_h) = (34u32, 230u32, 130u32, 360u32);
    let gap_h = if w.armature_gap_m.is_empty() {
        0
    } else {
        big_h
    };
    let height = title_h + 3 * big_h + drive_h + gap_h + zoom_rows * zoom_h;
    let (cur_title, cur_axis) = current_name(w);
    let x_full = (
        t_ms.first().copied().unwrap_or(0.0),
        t_ms.last().copied().unwrap_or(1.0).max(1e-6),
    );
    let mut buf = String::new();
    {
        let root = SVGBackend::with_string(&mut buf, (WIDTH, height)).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let verdict = if o.result.passed() {
            "all properties hold"
        } else {
            "PROPERTY VIOLATED"
        };
        let (top, rest) = root.split_vertically(title_h);
        top.draw(&Text::new(
            format!("{} — {} ({verdict})", o.system, o.scenario),
            (10, 8),
            (FONT, 18).into_font(),
        ))
        .map_err(err)?;
        let (a, rest) = rest.split_vertically(big_h);
        let (b, rest) = rest.split_vertically(big_h);
        let (c, rest) = rest.split_vertically(big_h);
        let (d, rest) = rest.split_vertically(drive_h);
        let (g, zoom_area) = rest.split_vertically(gap_h);
        let current = [
            Trace {
                label: if cur_axis.starts_with("Coil") {
                    "coil current"
                } else {
                    "inductor current"
                },
                values: &w.current_a,
                band: Some((&w.current_min_a, &w.current_max_a)),
                color: BLUE,
                steps: false,
            },
            Trace::line("estimate", &w.estimate_a, ESTIMATE),
        ];
        let switch = [Trace {
            label: "switch voltage",
            values: &w.switch_v,
            band: Some((&w.switch_v_min, &w.switch_v_max)),
            color: PURPLE,
            steps: false,
        }];
        if w.speed_rad_s.is_empty() {
            panel(&a, cur_title, cur_axis, &t_ms, x_full, &current, None, ev)?;
            panel(
                &b,
                "switch voltage (band: min..max between samples)",
                "Switch voltage (V)",
                &t_ms,
                x_full,
                &switch,
                None,
                ev,
            )?;
            panel(
                &c,
                "output voltage and supply",
                "Voltage (V)",
                &t_ms,
                x_full,
                &[
                    Trace::line("output", &w.output_v, GREEN),
                    Trace::line("supply", &w.supply_v, GREY),
                ],
                None,
                ev,
            )?;
        } else {
            // A motor run: the winding current (signed, positive forward), the rotor speed
            // and the bus voltage.
            let winding = [Trace {
                label: "winding current",
                ..current[0]
            }];
            panel(
                &a,
                "winding current (positive forward; band: min..max between samples)",
                "Winding current (A)",
                &t_ms,
                x_full,
                &winding,
                None,
                ev,
            )?;
            panel(
                &b,
                "rotor speed (positive forward)",
                "Speed (rad/s)",
                &t_ms,
                x_full,
                &[Trace::line("speed", &w.speed_rad_s, GREEN)],
                None,
                ev,
            )?;
            panel(
                &c,
                "bus voltage (the bridge rail)",
                "Voltage (V)",
                &t_ms,
                x_full,
                &[Trace::line("bus", &w.bus_v, PURPLE)],
                None,
                ev,
            )?;
        }
        panel(
            &d,
            "drive commanded by the firmware (0 off, 1 on, PWM duty between)",
            "Drive duty (0..1)",
            &t_ms,
            x_full,
            &[Trace {
                label: "drive",
                values: &w.drive,
                band: None,
                color: DRIVE,
                steps: true,
            }],
            Some((-0.05, 1.15)),
            ev,
        )?;
        if gap_h > 0 {
            let gap_mm: Vec<f64> = w.armature_gap_m.iter().map(|x| x * 1e3).collect();
            panel(
                &g,
                "armature air gap (open stop at the top, seated at the bottom; marks: the \
                 firmware's reports)",
                "Air gap (mm)",
                &t_ms,
                x_full,
                &[Trace::line("air gap", &gap_mm, GREEN)],
                None,
                ev,
            )?;
        }
        if !zooms.is_empty() {
            let cells = zoom_area.split_evenly((zoom_rows as usize, 2));
            for (z, cell) in zooms.iter().zip(&cells) {
                let t = z.t_s * 1e3;
                let (xa, xb) = zoom_span(&t_ms, &w.current_max_a, t);
                let r = window(&t_ms, xa, xb);
                let (tz, v, v0, v1) = (
                    slice(&t_ms, &r),
                    slice(&w.switch_v, &r),
                    slice(&w.switch_v_min, &r),
                    slice(&w.switch_v_max, &r),
                );
                let (i, i0, i1, est) = (
                    slice(&w.current_a, &r),
                    slice(&w.current_min_a, &r),
                    slice(&w.current_max_a, &r),
                    slice(&w.estimate_a, &r),
                );
                let name = if z.what == "demand off" {
                    "switch-off".to_string()
                } else {
                    event_label(&z.what).to_string()
                };
                let (upper, lower) = cell.split_vertically(zoom_h * 4 / 10);
                panel(
                    &upper,
                    &format!("zoom: {name} at {t:.3} ms"),
                    cur_axis,
                    &tz,
                    (xa, xb),
                    &[
                        Trace {
                            label: "current",
                            values: &i,
                            band: Some((&i0, &i1)),
                            color: BLUE,
                            steps: false,
                        },
                        Trace::line("estimate", &est, ESTIMATE),
                    ],
                    None,
                    ev,
                )?;
                panel(
                    &lower,
                    "",
                    "Switch voltage (V)",
                    &tz,
                    (xa, xb),
                    &[Trace {
                        label: "switch voltage",
                        values: &v,
                        band: Some((&v0, &v1)),
                        color: PURPLE,
                        steps: false,
                    }],
                    None,
                    ev,
                )?;
            }
        }
        root.present().map_err(err)?;
    }
    Ok(buf)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ev(t_s: f64, what: &str) -> RunEvent {
        RunEvent {
            t_s,
            what: what.to_string(),
        }
    }

    #[test]
    fn a_trip_names_the_fault_before_it() {
        let e = [
            ev(0.01, "demand on"),
            ev(0.05, "fault ShortedCoil { residual_inductance_h: 0.0 }"),
            ev(0.0502, "trip"),
        ];
        assert_eq!(
            trip_text(&e, 0.0502),
            "at 50.200 ms, after fault ShortedCoil"
        );
        assert_eq!(trip_text(&e[..1], 0.02), "at 20.000 ms, no fault before it");
    }

    #[test]
    fn zooms_are_switch_offs_and_faults_and_bounded() {
        let mut e = vec![ev(0.0, "demand on"), ev(0.1, "demand off"), ev(0.2, "trip")];
        for k in 0..20 {
            e.push(ev(0.3 + f64::from(k) * 0.01, "fault OpenCoil"));
        }
        let z = zoom_events(&e);
        assert_eq!(z.len(), MAX_ZOOMS);
        assert_eq!(z[0].what, "demand off");
        assert!(z[1..].iter().all(|x| x.what == "fault OpenCoil"));
    }

    #[test]
    fn a_zoom_ends_after_the_current_has_decayed() {
        // 0.1 ms points over 100 ms; the current falls from 1 A at 50 ms with tau 1 ms.
        let t: Vec<f64> = (0..1000).map(|k| f64::from(k) * 0.1).collect();
        let i: Vec<f64> = t
            .iter()
            .map(|&x| if x < 50.0 { 1.0 } else { (-(x - 50.0)).exp() })
            .collect();
        let (a, b) = zoom_span(&t, &i, 50.0);
        assert!((a - 49.5).abs() < 1e-9, "{a}");
        // Below 2 % after ln(50) = 3.9 ms, then 10 points.
        assert!((b - 54.0 - 1.0).abs() < 0.11, "{b}");
        // No current at all: the shortest span.
        let (_, b) = zoom_span(&t, &vec![0.0; t.len()], 50.0);
        assert!((b - 52.0).abs() < 1e-9, "{b}");
    }

    #[test]
    fn a_band_edge_keeps_every_extreme_with_few_points() {
        let pts: Vec<(f64, f64)> = (0..10_000)
            .map(|k| {
                (
                    f64::from(k),
                    if k == 7_777 { 9.0 } else { f64::from(k % 7) },
                )
            })
            .collect();
        let top = band_edge(pts.clone(), 100, true);
        let bottom = band_edge(pts.clone(), 100, false);
        assert!(top.len() <= 100 && bottom.len() <= 100);
        assert!(top.contains(&(7_777.0, 9.0)));
        assert!(
            top.iter().all(|p| p.1 >= 5.0),
            "every run reaches 6 but the spike's"
        );
        assert!(bottom.iter().all(|p| p.1 == 0.0));
        assert_eq!(band_edge(pts[..50].to_vec(), 100, true).len(), 50);
    }

    #[test]
    fn windows_pick_the_points_inside() {
        let t = [0.0, 1.0, 2.0, 3.0, 4.0];
        assert_eq!(window(&t, 0.5, 3.0), 1..4);
        assert_eq!(window(&t, 9.0, 10.0), 5..5);
    }
}
