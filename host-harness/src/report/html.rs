//! The report folder's `index.html`: the plan tables and the scenario results of each file,
//! with links to every scenario's SVG plot and CSV waveform and to the JUnit report. Plain
//! HTML with a little inline CSS; no script, no external resource.

use std::fmt::Write as _;

use super::Outcome;
use super::junit::escape;
use crate::cmd::plan::{Report, num};
use crate::cmd::sim::value;

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
         font-weight:bold}}.pass{{color:#070}}.note{{color:#555}}</style>\n</head>\n<body>\n",
        escape(title)
    );
    let _ = writeln!(
        h,
        "<h1>{}</h1>\n<p class=\"note\">{}</p>",
        escape(title),
        escape(note)
    );
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
        for o in s.outcomes {
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
                    escape(&o.scenario),
                    escape(&p.name.replace('_', " ")),
                    escape(&value(p.value, p.unit)),
                    escape(&value(p.limit, p.unit)),
                    if p.pass { "pass" } else { "fail" },
                    if p.pass { "pass" } else { "FAIL" },
                );
            }
        }
        h.push_str("</table>\n");
    }
    h.push_str("</body>\n</html>\n");
    h
}
