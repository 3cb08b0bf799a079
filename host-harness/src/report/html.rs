//! The report folder's `index.html`: a summary line at the top (files, scenarios, properties
//! held and failed, the worst margin) with every failed property listed first and linked to its
//! scenario, then the plan tables and the scenario results of each file (failing scenarios
//! first) and every scenario's plot shown inline, with links to its SVG and CSV waveform and to
//! the JUnit report. Plain HTML with a little inline CSS; no script, no external resource.

use std::fmt::Write as _;

use super::Outcome;
use super::junit::escape;
use super::summary::Summary;
use crate::report::text::{num, value};
use crate::system::PlanReport as Report;

/// One scenario file's part of the report.
pub struct Section<'a> {
    /// File name.
    pub file: &'a str,
    /// Its plan.
    pub plan: &'a Report,
    /// Its scenario runs.
    pub outcomes: &'a [Outcome],
}

/// The index page. `plots` and `csv` are the folder names (relative to the page) of the plots
/// and waveforms, `junit` the JUnit file's name.
#[must_use]
pub fn index(
    title: &str,
    note: &str,
    sections: &[Section<'_>],
    plots: &str,
    csv: &str,
    junit: &str,
) -> String {
    let mut h = String::new();
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>{}</title>\n\
         <style>body{{font-family:sans-serif;max-width:70em;margin:2em auto;padding:0 1em}}\
         table{{border-collapse:collapse;margin:0.5em 0 1.5em}}td,th{{border:1px solid #bbb;\
         padding:0.2em 0.6em;text-align:left}}th{{background:#eee}}.fail{{color:#b00;\
         font-weight:bold}}.pass{{color:#070}}.note{{color:#555}}.summary{{font-size:1.1em;\
         padding:0.5em 0.8em;border-left:0.4em solid #777;background:#f4f4f4}}\
         .summary.bad{{border-color:#b00}}.summary.good{{border-color:#070}}\
         figure{{margin:0.5em 0 2em}}figure img{{max-width:100%;border:1px solid #ccc}}</style>\n</head>\n<body>\n",
        escape(title)
    );
    let _ = writeln!(
        h,
        "<h1>{}</h1>\n<p class=\"note\">{}</p>",
        escape(title),
        escape(note)
    );
    summary_block(&mut h, sections);
    let _ = writeln!(
        h,
        "<p>JUnit report of every scenario and property: <a href=\"{0}\">{0}</a>; the plans \
         and results below as JSON: <a href=\"results.json\">results.json</a></p>",
        escape(junit)
    );
    for s in sections {
        let _ = writeln!(
            h,
            "<h2>{} — {}</h2>",
            escape(&s.plan.system),
            escape(s.file)
        );
        h.push_str("<h3>Worst-case plan</h3>\n<table>\n<tr><th>Figure</th><th>Min</th><th>at</th><th>Max</th><th>at</th></tr>\n");
        for f in &s.plan.figures {
            let _ = writeln!(
                h,
                "<tr><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
                escape(f.figure),
                escape(&num(f.min, f.unit)),
                escape(&f.min_text),
                escape(&num(f.max, f.unit)),
                escape(&f.max_text)
            );
        }
        h.push_str("</table>\n<table>\n<tr><th>Verdict</th><th>Worst</th><th>Limit</th><th>Result</th><th>Note</th></tr>\n");
        for v in &s.plan.verdicts {
            let _ = writeln!(
                h,
                "<tr><td>{}</td><td>{}</td><td>{}</td><td class=\"{}\">{}</td><td>{}</td></tr>",
                escape(&v.check),
                escape(&v.value.map_or_else(|| "—".to_string(), |x| num(x, v.unit))),
                escape(&num(v.limit, v.unit)),
                if v.pass { "pass" } else { "fail" },
                if v.pass { "pass" } else { "FAIL" },
                escape(v.note.as_deref().unwrap_or(""))
            );
        }
        h.push_str("</table>\n<h3>Scenarios in the closed loop</h3>\n<table>\n<tr><th>Scenario</th><th>Property</th><th>Value</th><th>Limit</th><th>Result</th><th>Plot</th><th>Waveform</th></tr>\n");
        // Failing scenarios first, each group in file order.
        let ordered: Vec<&Outcome> = s
            .outcomes
            .iter()
            .filter(|o| !o.result.passed())
            .chain(s.outcomes.iter().filter(|o| o.result.passed()))
            .collect();
        for &o in &ordered {
            let st = &o.stem;
            for (k, p) in o.result.properties.iter().enumerate() {
                let (plot, wave) = if k == 0 {
                    (
                        format!("<a href=\"{plots}/{st}.svg\">SVG</a>"),
                        format!("<a href=\"{csv}/{st}.csv\">CSV</a>"),
                    )
                } else {
                    (String::new(), String::new())
                };
                let _ = writeln!(
                    h,
                    "<tr><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td class=\"{}\">{}</td><td>{plot}</td><td>{wave}</td></tr>",
                    if k == 0 {
                        format!("<a href=\"#{st}\">{}</a>", escape(&o.scenario))
                    } else {
                        escape(&o.scenario)
                    },
                    escape(&p.name.replace('_', " ")),
                    escape(&value(p.value, p.unit)),
                    escape(&value(p.limit, p.unit)),
                    if p.pass { "pass" } else { "fail" },
                    if p.pass { "pass" } else { "FAIL" },
                );
            }
        }
        h.push_str("</table>\n");
        for &o in &ordered {
            let st = &o.stem;
            let _ = writeln!(
                h,
                "<h3 id=\"{st}\">{} ({})</h3>\n<figure><img src=\"{plots}/{st}.svg\" \
                 alt=\"Waveforms of the scenario {}\"><figcaption>The plot alone: \
                 <a href=\"{plots}/{st}.svg\">SVG</a>; the samples: \
                 <a href=\"{csv}/{st}.csv\">CSV</a></figcaption></figure>",
                escape(&o.scenario),
                if o.result.passed() {
                    "all properties hold"
                } else {
                    "PROPERTY VIOLATED"
                },
                escape(&o.scenario),
            );
        }
    }
    h.push_str("</body>\n</html>\n");
    h
}

/// The summary line and the list of failed properties, each linked to its scenario's plot.
fn summary_block(h: &mut String, sections: &[Section<'_>]) {
    let mut sum = Summary::default();
    for s in sections {
        let fail = s.plan.verdicts.iter().filter(|v| !v.pass).count();
        sum.add_file(s.outcomes, s.plan.verdicts.len() - fail, fail);
    }
    let worst = sum.worst.as_ref().map_or_else(
        || "no property with a limit to measure a margin against".to_string(),
        |w| {
            let m = if w.margin.is_finite() {
                format!("{:.1} %", w.margin * 100.0)
            } else {
                "never reached".to_string()
            };
            format!(
                "worst margin {m}: {} in <a href=\"#{}\">{}</a> ({} against {})",
                escape(&w.property.name.replace('_', " ")),
                w.outcome.stem,
                escape(&w.outcome.scenario),
                escape(&value(w.property.value, w.property.unit)),
                escape(&value(w.property.limit, w.property.unit)),
            )
        },
    );
    let n_props = sum.held + sum.failed.len();
    let _ = writeln!(
        h,
        "<p class=\"summary {}\"><strong>{}</strong> · {} files · {} scenarios · {} of {n_props} \
         properties hold, {} failed · plan verdicts: {} pass, {} fail · {worst}</p>",
        if sum.all_hold() { "good" } else { "bad" },
        if sum.all_hold() {
            "Everything holds"
        } else if n_props + sum.plan_pass + sum.plan_fail == 0 {
            "Nothing was checked"
        } else {
            "FAILED"
        },
        sum.files,
        sum.scenarios,
        sum.held,
        sum.failed.len(),
        sum.plan_pass,
        sum.plan_fail,
    );
    if !sum.failed.is_empty() {
        h.push_str("<ul class=\"fail\">\n");
        for (o, p) in &sum.failed {
            let _ = writeln!(
                h,
                "<li><a href=\"#{}\">{} — {}</a>: {} against the limit {}</li>",
                o.stem,
                escape(&o.scenario),
                escape(&p.name.replace('_', " ")),
                escape(&value(p.value, p.unit)),
                escape(&value(p.limit, p.unit)),
            );
        }
        h.push_str("</ul>\n");
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::closed_loop::{Property, RunResult};

    fn outcome(scenario: &str, value: f64) -> Outcome {
        Outcome {
            file: "valve.toml".into(),
            system: "irrigation valve".into(),
            scenario: scenario.into(),
            stem: crate::report::base_stem("valve.toml", scenario),
            result: RunResult {
                properties: vec![Property {
                    name: "peak_switch_voltage",
                    value,
                    limit: 60.0,
                    unit: "V",
                    pass: value <= 60.0,
                    bound: crate::closed_loop::Bound::Max,
                    detail: None,
                }],
                waveform: Default::default(),
                events: vec![],
                switch_offs: vec![],
                ticks: 1,
                simulated_s: 1e-4,
            },
        }
    }

    #[test]
    fn failures_come_first_and_link_to_their_plot() {
        let plan = Report {
            file: "valve.toml".into(),
            system: "irrigation valve".into(),
            passed: true,
            figures: vec![],
            verdicts: vec![],
        };
        let runs = [outcome("cold coil", 27.1), outcome("no clamp", 75.0)];
        let sections = [Section {
            file: "valve.toml",
            plan: &plan,
            outcomes: &runs,
        }];
        let h = index("t", "invented", &sections, "plots", "csv", "junit.xml");
        let summary = h.find("class=\"summary bad\"").expect("summary");
        let failure = h
            .find("<li><a href=\"#valve--no-clamp\">no clamp — peak switch voltage</a>")
            .expect("the failure listed and linked");
        let plan_table = h.find("Worst-case plan").expect("plan");
        assert!(summary < failure && failure < plan_table);
        assert!(h.contains("1 of 2 properties hold, 1 failed"));
        assert!(h.contains("worst margin -25.0 %"));
        // The failing scenario's row and plot come before the passing one's.
        let (bad, good) = (
            h.find("<h3 id=\"valve--no-clamp\">").expect("failing plot"),
            h.find("<h3 id=\"valve--cold-coil\">")
                .expect("passing plot"),
        );
        assert!(bad < good);
        assert!(h.contains("<img src=\"plots/valve--no-clamp.svg\""));
    }
}
