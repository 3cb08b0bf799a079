//! SVG plots with `plotters` (SVG backend only; its built-in text metrics need no font
//! library, and the text is rendered by whatever displays the SVG).

use plotters::coord::Shift;
use plotters::prelude::*;

use super::Outcome;
use crate::closed_loop::RunEvent;

const FONT: &str = "sans-serif";

fn err<E: std::fmt::Debug>(e: E) -> String {
    format!("plot: {e:?}")
}

/// `lo..hi` with a margin, never empty.
fn span(values: impl Iterator<Item = f64>) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values.filter(|v| v.is_finite()) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if !lo.is_finite() {
        return (0.0, 1.0);
    }
    let pad = ((hi - lo) * 0.08)
        .max(hi.abs().max(lo.abs()) * 1e-3)
        .max(1e-9);
    (lo.min(0.0) - pad * f64::from(u8::from(lo < 0.0)), hi + pad)
}

fn mark_color(e: &RunEvent) -> RGBColor {
    if e.what == "trip" {
        RED
    } else if e.what.starts_with("fault") {
        RGBColor(230, 120, 0)
    } else {
        RGBColor(120, 120, 120)
    }
}

/// Short label of a closed-loop event: load and supply steps are injected like faults but
/// are operating conditions.
fn event_label(what: &str) -> &'static str {
    if what.contains("LoadStep") {
        "load step"
    } else if what.contains("SupplySag") || what.contains("SupplySurge") {
        "supply step"
    } else {
        "fault"
    }
}

/// Points per panel at most: two per pixel column of the 960-pixel-wide plot.
const MAX_POINTS: usize = 2 * 960;

/// At most about `max` points that draw the same line as `pts` at the plot's resolution:
/// `pts` (in time order) is cut into `max / 2` runs of equal length, and each run gives its
/// lowest and highest point, in time order (the envelope a line through every point would
/// fill). Short series are returned whole. So an SVG stays small and quick to draw whatever
/// the scenario's length.
fn envelope(pts: Vec<(f64, f64)>, max: usize) -> Vec<(f64, f64)> {
    let runs = (max / 2).max(1);
    if pts.len() <= max {
        return pts;
    }
    let per = pts.len().div_ceil(runs);
    let mut out = Vec::with_capacity(2 * runs);
    for chunk in pts.chunks(per) {
        let lo = chunk
            .iter()
            .enumerate()
            .min_by(|a, b| a.1.1.total_cmp(&b.1.1));
        let hi = chunk
            .iter()
            .enumerate()
            .max_by(|a, b| a.1.1.total_cmp(&b.1.1));
        if let (Some((i, &l)), Some((j, &h))) = (lo, hi) {
            match i.cmp(&j) {
                std::cmp::Ordering::Less => out.extend([l, h]),
                std::cmp::Ordering::Greater => out.extend([h, l]),
                std::cmp::Ordering::Equal => out.push(l),
            }
        }
    }
    out
}

struct Series<'a> {
    label: &'a str,
    values: &'a [f64],
    color: RGBColor,
}

fn panel(
    area: &DrawingArea<SVGBackend<'_>, Shift>,
    title: &str,
    unit: &str,
    t_ms: &[f64],
    series: &[Series<'_>],
    events: &[RunEvent],
) -> Result<(), String> {
    let (x0, x1) = (
        t_ms.first().copied().unwrap_or(0.0),
        t_ms.last().copied().unwrap_or(1.0).max(1e-6),
    );
    let (y0, y1) = span(series.iter().flat_map(|s| s.values.iter().copied()));
    let mut chart = ChartBuilder::on(area)
        .margin(6)
        .caption(title, (FONT, 15))
        .x_label_area_size(28)
        .y_label_area_size(56)
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(err)?;
    chart
        .configure_mesh()
        .x_desc("time (ms)")
        .y_desc(unit)
        .label_style((FONT, 11))
        .draw()
        .map_err(err)?;
    for e in events {
        let t = e.t_s * 1e3;
        let c = mark_color(e);
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(t, y0), (t, y1)],
                c.stroke_width(1),
            )))
            .map_err(err)?;
        if e.what == "trip" || e.what.starts_with("fault") {
            // Trip labels sit lower than the others, so the two never overlap.
            let (label, y) = if e.what == "trip" {
                ("trip", y0 + 0.9 * (y1 - y0))
            } else {
                (event_label(&e.what), y1)
            };
            chart
                .draw_series(std::iter::once(Text::new(
                    label,
                    (t, y),
                    (FONT, 11).into_font().color(&c),
                )))
                .map_err(err)?;
        }
    }
    for s in series {
        let pts: Vec<(f64, f64)> = t_ms
            .iter()
            .zip(s.values)
            .filter(|(_, v)| v.is_finite())
            .map(|(t, v)| (*t, *v))
            .collect();
        if pts.is_empty() {
            continue;
        }
        let pts = envelope(pts, MAX_POINTS);
        let c = s.color;
        chart
            .draw_series(LineSeries::new(pts, c.stroke_width(1)))
            .map_err(err)?
            .label(s.label)
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], c.stroke_width(2)));
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .label_font((FONT, 11))
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .draw()
        .map_err(err)?;
    Ok(())
}

/// The waveform plot of one scenario: current and estimate, switch voltage, output voltage;
/// demand changes (grey), faults and load or supply steps (orange) and trips (red) marked.
///
/// # Errors
///
/// Drawing failed (a message).
pub fn waveform_svg(o: &Outcome) -> Result<String, String> {
    let w = &o.result.waveform;
    let t_ms: Vec<f64> = w.t_s.iter().map(|t| t * 1e3).collect();
    let mut buf = String::new();
    {
        let root = SVGBackend::with_string(&mut buf, (960, 820)).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let verdict = if o.result.passed() {
            "all properties hold"
        } else {
            "PROPERTY VIOLATED"
        };
        let (top, rest) = root.split_vertically(34);
        top.draw(&Text::new(
            format!("{} — {} ({verdict})", o.system, o.scenario),
            (10, 8),
            (FONT, 18).into_font(),
        ))
        .map_err(err)?;
        let areas = rest.split_evenly((3, 1));
        let blue = RGBColor(31, 90, 180);
        let green = RGBColor(20, 150, 60);
        let ev = &o.result.events;
        if let [a, b, c] = areas.as_slice() {
            let has_estimate = w.estimate_a.iter().any(|v| v.is_finite());
            panel(
                a,
                if has_estimate {
                    "coil current and the firmware's estimate"
                } else {
                    "inductor current"
                },
                "A",
                &t_ms,
                &[
                    Series {
                        label: "plant current",
                        values: &w.current_a,
                        color: blue,
                    },
                    Series {
                        label: "estimate",
                        values: &w.estimate_a,
                        color: RGBColor(220, 60, 40),
                    },
                ],
                ev,
            )?;
            panel(
                b,
                "switch voltage (at the sampling instants)",
                "V",
                &t_ms,
                &[Series {
                    label: "switch",
                    values: &w.switch_v,
                    color: RGBColor(120, 40, 160),
                }],
                ev,
            )?;
            panel(
                c,
                "output voltage and supply",
                "V",
                &t_ms,
                &[
                    Series {
                        label: "output",
                        values: &w.output_v,
                        color: green,
                    },
                    Series {
                        label: "supply",
                        values: &w.supply_v,
                        color: RGBColor(100, 100, 100),
                    },
                ],
                ev,
            )?;
        }
        root.present().map_err(err)?;
    }
    Ok(buf)
}

/// A histogram of `counts` over `[lo, hi]` (equal bins), with the limit marked.
///
/// # Errors
///
/// Drawing failed (a message).
pub fn histogram_svg(
    title: &str,
    unit: &str,
    lo: f64,
    hi: f64,
    counts: &[u64],
    limit: f64,
) -> Result<String, String> {
    let mut buf = String::new();
    {
        let root = SVGBackend::with_string(&mut buf, (720, 360)).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let n = counts.len().max(1) as f64;
        let (mut x0, mut x1) = (lo.min(limit), hi.max(limit));
        if x1.partial_cmp(&x0) != Some(std::cmp::Ordering::Greater) {
            x0 -= 0.5;
            x1 += 0.5;
        }
        let pad = (x1 - x0) * 0.04;
        let ymax = counts.iter().copied().max().unwrap_or(1).max(1) as f64 * 1.1;
        let mut chart = ChartBuilder::on(&root)
            .margin(8)
            .caption(title, (FONT, 15))
            .x_label_area_size(30)
            .y_label_area_size(50)
            .build_cartesian_2d((x0 - pad)..(x1 + pad), 0.0..ymax)
            .map_err(err)?;
        chart
            .configure_mesh()
            .x_desc(unit)
            .y_desc("runs")
            .label_style((FONT, 11))
            .draw()
            .map_err(err)?;
        let w = (hi - lo) / n;
        chart
            .draw_series(counts.iter().enumerate().map(|(k, &c)| {
                let a = lo + w * k as f64;
                Rectangle::new(
                    [(a, 0.0), (a + w.max(1e-300), c as f64)],
                    RGBColor(31, 90, 180).mix(0.7).filled(),
                )
            }))
            .map_err(err)?;
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(limit, 0.0), (limit, ymax)],
                RED.stroke_width(2),
            )))
            .map_err(err)?;
        chart
            .draw_series(std::iter::once(Text::new(
                "limit",
                (limit, ymax),
                (FONT, 11).into_font().color(&RED),
            )))
            .map_err(err)?;
        root.present().map_err(err)?;
    }
    Ok(buf)
}

#[cfg(test)]
mod tests {
    use super::envelope;

    #[test]
    fn envelope_keeps_short_series_and_every_extreme_of_long_ones() {
        let short: Vec<(f64, f64)> = (0..10).map(|k| (f64::from(k), f64::from(k % 3))).collect();
        assert_eq!(envelope(short.clone(), 20), short);
        // A 1 kHz square wave with one spike, sampled 100 000 times.
        let long: Vec<(f64, f64)> = (0..100_000)
            .map(|k| {
                let v = if k == 54_321 {
                    9.0
                } else if (k / 50) % 2 == 0 {
                    1.0
                } else {
                    -1.0
                };
                (f64::from(k), v)
            })
            .collect();
        let e = envelope(long, 1000);
        assert!(e.len() <= 1000, "{}", e.len());
        assert!(e.windows(2).all(|w| w[0].0 < w[1].0), "time order");
        let max = e.iter().map(|p| p.1).fold(f64::MIN, f64::max);
        let min = e.iter().map(|p| p.1).fold(f64::MAX, f64::min);
        assert_eq!((min, max), (-1.0, 9.0), "the spike and both levels survive");
        assert!(e.contains(&(54_321.0, 9.0)));
    }
}
