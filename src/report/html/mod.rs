//! `report.html`: the batch report as one self-contained page to look at (inline SVG charts,
//! inline style, a few lines of inline script for sorting; nothing fetched from anywhere).
//!
//! What is drawn comes from [`chart`], plain numbers in hartree that tests hold against
//! `report.json`; the drawing converts them to the report's unit. The page shows the verdict,
//! the models across the set (table and the distribution of δ_i = J_i + E_x,i + E_c,i, median
//! |δ| marked), the Perdew–Zunger correction −Σ_i g_i δ_i of every calculation, the cancellation
//! ratio −E_x,i/J_i against J_i, the worst orbitals and every calculation's ranked orbitals.
//!
//! Like the other reports it is byte-for-byte reproducible: its date is not the clock's but
//! the caller's, or the newest modification date among the inputs (see [`date`]).

pub mod chart;
pub mod date;
pub mod svg;

use super::batch::{BatchReport, counted_cell, counted_flag, coverage_sentence, left_out_cell};
use super::{EnergyUnit, flags_text};
use crate::batch::Workflow;
use crate::diagnostics::{Flag, OrbitalReport};
use chart::{CancellationSeries, DeltaRow, PzGroup, Verdict};
pub use date::ReportDate;
use std::fmt::Write as _;
use svg::{Linear, Log10, Look, decade_label, esc, key, look, marker, n1, nice_ticks, tick_label};

/// The date a page shows, and where it came from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Dated {
    /// Given by the caller (`sixray batch --date`).
    Given(ReportDate),
    /// The newest modification date among the workflow file and its grid files.
    Inputs(ReportDate),
    /// No input file's time could be read.
    Unknown,
}

impl Dated {
    /// The caller's date if given, else the inputs' newest modification date.
    pub fn for_workflow(workflow: &Workflow, given: Option<ReportDate>) -> Self {
        if let Some(d) = given {
            return Dated::Given(d);
        }
        let files = std::iter::once(workflow.path.as_path())
            .chain(workflow.calculations.iter().flat_map(|c| c.files.iter().chain(c.density.iter()).map(|p| p.as_path())));
        ReportDate::newest_modification(files).map_or(Dated::Unknown, Dated::Inputs)
    }

    fn html(self) -> String {
        match self {
            Dated::Given(d) => d.to_string(),
            Dated::Inputs(d) => format!("{d} <span class=\"note\">(newest input file's modification date, UTC)</span>"),
            Dated::Unknown => "unknown <span class=\"note\">(input file times unreadable)</span>".into(),
        }
    }
}

const STYLE: &str = include_str!("page.css");
const SCRIPT: &str = include_str!("sort.js");
/// Width of every chart's coordinate system; the page scales it to the column.
const W: f64 = 1100.0;
const INK: &str = "#1b2230";
const MUTED: &str = "#586275";
const GRID: &str = "#dde1e8";
/// Opens a subscript inside SVG text.
const SUB: &str = r#"<tspan baseline-shift="sub" font-size="10">"#;

/// A number for people: the unit's decimals, with a true minus sign.
fn num(unit: EnergyUnit, hartree: f64) -> String {
    minus(&unit.format(hartree))
}

fn minus(s: &str) -> String {
    s.replace('-', "−")
}

/// A numeric table cell that sorts by `raw` (one that is not finite sorts by its text, after
/// the numbers).
fn td_num(shown: &str, raw: f64) -> String {
    if raw.is_finite() { format!(r#"<td class="num" data-v="{raw}">{shown}</td>"#) } else { format!(r#"<td class="num">{shown}</td>"#) }
}

/// A value with its error bar below it (sorting by the value; no bar to a value that is not
/// finite, which shows as not a result).
fn td_err(unit: EnergyUnit, value: f64, error: Option<f64>) -> String {
    match error.filter(|_| value.is_finite()) {
        Some(e) => format!(r#"<td class="num" data-v="{value}">{}<span class="e">± {}</span></td>"#, num(unit, value), num(unit, e)),
        None => td_num(&num(unit, value), value),
    }
}

fn td(text: &str) -> String {
    format!("<td>{}</td>", esc(text))
}

fn th(text: &str, numeric: bool) -> String {
    if numeric { format!(r#"<th class="num" scope="col">{text}</th>"#) } else { format!(r#"<th scope="col">{text}</th>"#) }
}

/// A sortable table: `head` cells are already HTML, as are the row cells.
fn table(id: &str, caption: &str, head: &[String], rows: &[Vec<String>], full: bool) -> String {
    let mut out = format!(
        r#"<div class="scroll"><table class="data sortable{}" id="{id}"><caption>{caption}</caption><thead><tr>{}</tr></thead><tbody>"#,
        if full { " full" } else { "" },
        head.concat()
    );
    for r in rows {
        let _ = write!(out, "\n<tr>{}</tr>", r.concat());
    }
    out += "\n</tbody></table></div>\n";
    out
}

fn flag_chips(o: &OrbitalReport) -> String {
    let text = flags_text(o);
    let class = match text.as_str() {
        "ok" => "flag fine",
        "unchecked" => "flag none",
        _ => "flag",
    };
    let chips: String = text.split(", ").map(|f| format!(r#"<span class="{class}">{}</span>"#, esc(f))).collect();
    format!(r#"<td data-v="">{chips}</td>"#)
}

fn model_cell(report: &BatchReport, m: usize) -> String {
    format!(r#"<td class="keyed">{}{}</td>"#, key(&look(m)), esc(&report.workflow.models[m].name))
}

/// The page.
pub fn render(report: &BatchReport, unit: EnergyUnit, dated: Dated) -> String {
    let wf = report.workflow;
    let title = format!("Self-interaction survey: {}", workflow_name(report));
    let mut out = String::with_capacity(256 * 1024);
    let _ = write!(
        out,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; style-src 'unsafe-inline'; script-src 'unsafe-inline'\">\n\
         <meta name=\"generator\" content=\"sixray {}\">\n<title>{}</title>\n<style>\n{STYLE}</style>\n</head>\n<body>\n<main>\n",
        env!("CARGO_PKG_VERSION"),
        esc(&title)
    );
    out += &header(report, unit, dated);
    let verdict = chart::verdict(report);
    out += &verdict_section(&verdict, report.summary.coverage.spin_orbitals, report.summary.coverage.total_spin_orbitals(), unit);
    out += "<nav class=\"toc\" aria-label=\"Contents\"><a href=\"#models\">Models across the set</a><a href=\"#perdew-zunger\">Perdew–Zunger corrections</a>\
            <a href=\"#cancellation\">Cancellation</a>";
    if !report.summary.tags.is_empty() {
        out += "<a href=\"#tags\">By tag</a>";
    }
    out += "<a href=\"#worst\">Worst orbitals</a><a href=\"#calculations\">Calculations</a></nav>\n";
    out += &models_section(report, unit);
    out += &pz_section(report, unit);
    out += &cancellation_section(report, unit);
    out += &tags_section(report, unit);
    out += &worst_section(report, unit);
    out += &calculations_section(report, unit);
    let _ = writeln!(
        out,
        "<footer><p>Written by sixray {} from <code>{}</code>. The same inputs give the same page, byte for byte: it holds no \
         clock time, and its date is {}. Energies in {}; <code>report.json</code> and <code>orbitals.csv</code> beside this \
         file carry every number in hartree. Charts are inline SVG (hover a point for its values); sorting the tables needs \
         scripts, reading them does not.</p></footer>",
        env!("CARGO_PKG_VERSION"),
        esc(&wf.path.display().to_string()),
        match dated {
            Dated::Given(_) => "the one given to <code>sixray batch --date</code>",
            Dated::Inputs(_) => "the newest modification date among the workflow file and its grid files",
            Dated::Unknown => "unknown",
        },
        unit.symbol()
    );
    let _ = write!(out, "</main>\n<script>\n{SCRIPT}</script>\n</body>\n</html>\n");
    out
}

fn workflow_name(report: &BatchReport) -> String {
    report.workflow.path.file_name().map_or_else(String::new, |n| n.to_string_lossy().into_owned())
}

fn header(report: &BatchReport, unit: EnergyUnit, dated: Dated) -> String {
    let wf = report.workflow;
    let ok = report.results.iter().filter(|c| c.is_ok());
    let records: usize = ok.clone().map(|c| c.outcome.ranking.orbitals.len()).sum();
    let spin_orbitals: u32 = ok.map(|c| c.outcome.ranking.spin_orbitals).sum();
    let models: String = wf
        .models
        .iter()
        .enumerate()
        .map(|(i, m)| {
            let corr = m.correlation.as_ref().map_or("no correlation".to_string(), |c| c.id());
            format!(r#"<span class="keyed" title="exchange {} · {}">{}{}</span>"#, esc(&m.exchange.id()), esc(&corr), key(&look(i)), esc(&m.name))
        })
        .collect();
    format!(
        "<header class=\"top\">\n<p class=\"kicker\">sixray {version} · batch report</p>\n\
         <h1>Self-interaction survey <span class=\"set\">· {name}</span></h1>\n<dl class=\"facts\">\n\
         <dt>Test set</dt><dd><code>{name}</code>: {calcs} calculations, {records} orbital records ({spin_orbitals} spin-orbitals) in the completed ones</dd>\
         <dt>Date</dt><dd>{date}</dd>\n\
         <dt>Units</dt><dd>{sym} in tables and charts (JSON and CSV: hartree)</dd>\
         <dt>Tool</dt><dd>sixray {version}</dd>\n\
         <dt>Models</dt><dd class=\"wide\">{models}</dd>\n\
         <dt>Ranking</dt><dd class=\"wide\">by |δ| under {rank_by}; δ = J + E<sub>x</sub> + E<sub>c</sub>, zero for the exact functional; \
         each restricted orbital counts as two spin-orbitals</dd>\n</dl>\n</header>\n",
        version = env!("CARGO_PKG_VERSION"),
        name = esc(&workflow_name(report)),
        calcs = report.results.len(),
        date = dated.html(),
        sym = unit.symbol(),
        rank_by = esc(&wf.models[wf.rank_by].name),
    )
}

/// The verdict: `counted` of `spin_orbitals` are in the set statistics.
fn verdict_section(v: &Verdict, counted: u32, spin_orbitals: u32, unit: EnergyUnit) -> String {
    let (class, mark, headline) = if !v.failed.is_empty() {
        ("fail", "!", format!("{} of {} calculations failed", v.failed.len(), v.calculations))
    } else if v.records > 0 && v.unchecked == v.records {
        ("warn", "?", format!("All {} calculations completed; no orbital was checked (error bars off)", v.calculations))
    } else if v.flagged > 0 || v.above_tolerance > 0 {
        ("warn", "!", format!("All {} calculations completed; {} of {} orbital records flagged", v.calculations, v.flagged, v.records))
    } else {
        ("ok", "✓", format!("All {} calculations completed; every orbital passed the grid checks", v.calculations))
    };
    let tol = format!("{} {}", num(unit, v.tolerance), unit.symbol());
    let checked = v.records - v.unchecked;
    let mut out = format!(
        "<section class=\"verdict {class}\" id=\"verdict\" aria-labelledby=\"verdict-h\">\n<h2 id=\"verdict-h\"><span class=\"mark\" aria-hidden=\"true\">{mark}</span>{headline}</h2>\n\
         <div class=\"tiles\">\
         <div class=\"tile\"><b>{} / {}</b><span>calculations completed</span></div>\
         <div class=\"tile{}\"><b>{}</b><span>calculations failed</span></div>\
         <div class=\"tile\"><b>{} / {checked}</b><span>orbital records with an error bar (J or δ) above {tol}</span></div>\
         <div class=\"tile\"><b>{} / {}</b><span>orbital records flagged by the grid checks</span></div>\
         <div class=\"tile{}\"><b>{counted} / {spin_orbitals}</b><span>spin-orbitals in the statistics (unflagged, bars within {tol})</span></div>\
         </div>\n",
        v.completed,
        v.calculations,
        if v.failed.is_empty() { "" } else { " alert" },
        v.failed.len(),
        v.above_tolerance,
        v.flagged,
        v.records,
        if counted == 0 && spin_orbitals > 0 { " alert" } else { "" },
    );
    if !v.flags.is_empty() {
        let list = v.flags.iter().map(|(f, n)| format!("{n} <span class=\"flag\">{}</span>", f.as_str())).collect::<Vec<_>>().join(", ");
        let meaning = v
            .flags
            .iter()
            .map(|(f, _)| {
                let what = match f {
                    Flag::UnderResolved => "the grid-dependent part of an error bar exceeds the tolerance (a finer grid helps)",
                    Flag::TruncatedBox => "noticeable charge outside the box (a larger box helps)",
                    Flag::NormOff => "the norm is off the occupation by over 1 %",
                    Flag::KindSuspicious => "the values look like densities given as amplitudes, or the reverse",
                    Flag::NotFinite => "some number is not finite (infinite or NaN) and no result (left out of the statistics and totals)",
                };
                format!("{}: {what}", f.as_str())
            })
            .collect::<Vec<_>>()
            .join("; ");
        let _ = writeln!(out, "<p>Flags: {list}. <span class=\"note\">{meaning}.</span></p>");
    }
    if v.unchecked > 0 && v.unchecked < v.records {
        let _ = writeln!(out, "<p>{} orbital records carry no error bars and were not checked.</p>", v.unchecked);
    }
    if !v.failed.is_empty() {
        out += "<p>Failed calculations are left out of every statistic and chart; their good orbitals are listed below.</p>\n<ul class=\"failures\">\n";
        for (name, failures) in &v.failed {
            for (source, error) in failures {
                let _ = writeln!(out, "<li><b>{}</b>: <code>{}</code><br><code>{}</code></li>", esc(name), esc(source), esc(error));
            }
        }
        out += "</ul>\n";
    }
    out += "</section>\n";
    out
}

/// The sentence saying what the set statistics count, for the page.
fn coverage_html(report: &BatchReport, unit: EnergyUnit) -> String {
    let s = report.summary;
    esc(&coverage_sentence(&s.coverage, s.tolerance, unit, " (the same records for every model)"))
}

/// What a chart of the statistics' records shows when there are none.
fn nothing_counted(report: &BatchReport) -> &'static str {
    if report.summary.coverage.total_spin_orbitals() == 0 {
        "No completed calculation: nothing to plot."
    } else {
        "No record within its error bars: nothing to plot."
    }
}

fn models_section(report: &BatchReport, unit: EnergyUnit) -> String {
    let u = unit.symbol();
    let counted = report.summary.coverage.spin_orbitals > 0;
    let mut head = vec![th("model", false), th("exchange", false), th("correlation", false)];
    if counted {
        head.extend([
            th(&format!("mean |δ| ({u})"), true),
            th(&format!("median |δ| ({u})"), true),
            th(&format!("max |δ| ({u})"), true),
            th("max at", false),
            th("mean −E<sub>x</sub>/J", true),
        ]);
    }
    let rows: Vec<Vec<String>> = report
        .workflow
        .models
        .iter()
        .zip(&report.summary.models)
        .enumerate()
        .map(|(i, (m, s))| {
            let mut row = vec![model_cell(report, i), td(&m.exchange.id()), td(&m.correlation.as_ref().map_or("—".into(), |c| c.id()))];
            match s {
                Some(s) => {
                    row.push(td_num(&num(unit, s.mean_abs), s.mean_abs));
                    row.push(td_num(&num(unit, s.median_abs), s.median_abs));
                    row.push(td_num(&num(unit, s.max_abs), s.max_abs));
                    row.push(td(&format!("{} / {}", s.max_at.0, s.max_at.1)));
                    row.push(td_num(&format!("{:.4}", s.mean_cancellation), s.mean_cancellation));
                }
                None if counted => row.extend(std::iter::repeat_n(td("—"), 5)),
                None => {}
            }
            row
        })
        .collect();
    let rows_data = chart::delta_rows(report);
    let lead = if counted {
        format!(
            "How far each model is from cancelling every orbital's self-repulsion. {} Records count when their error bars are \
             computed and within the tolerance and they carry no flag; every record is in the calculations' tables below. The \
             best model has its points furthest left.",
            coverage_html(report, unit)
        )
    } else {
        format!("{} No model can be told better than another from these records.", coverage_html(report, unit))
    };
    let caption = if counted { format!("Per model over the counted records; {u}.") } else { "The models (no record to compare them on).".into() };
    format!(
        "<section id=\"models\">\n<h2>Models across the set</h2>\n\
         <p class=\"lead\">{lead}</p>\n{}\
         <figure class=\"chart\" id=\"fig-delta\">\n{}<figcaption><b>Self-interaction error per orbital.</b> One row per model, one \
         marker per counted orbital record (the records of the table; those left out are not drawn), at its |δ| on a \
         logarithmic axis; filled markers have δ &gt; 0 (self-repulsion left over), open ones δ &lt; 0 (more than cancelled). \
         The dark bar marks the median |δ| over spin-orbitals, as in the table; horizontal lines are error bars. Records are \
         spread vertically only to keep them apart: each record sits at the same height in every row.</figcaption>\n</figure>\n</section>\n",
        table("table-models", &caption, &head, &rows, true),
        delta_chart(&rows_data, unit, nothing_counted(report))
    )
}

fn pz_section(report: &BatchReport, unit: EnergyUnit) -> String {
    let u = unit.symbol();
    let wf = report.workflow;
    let mut head = vec![th("calculation", false), th("tags", false), th("status", false), th("spin-orbitals", true), th("counted", true)];
    head.extend((0..wf.models.len()).map(|m| format!(r#"<th class="num" scope="col">{}{}</th>"#, key(&look(m)), esc(&wf.models[m].name))));
    let s = report.summary;
    let rows: Vec<Vec<String>> = report
        .results
        .iter()
        .zip(&s.calculations)
        .enumerate()
        .map(|(i, (c, counted))| {
            let mut row = vec![
                format!(r##"<td><a href="#calc-{}">{}</a></td>"##, i + 1, esc(&c.name)),
                td(&c.tags.join(", ")),
                td(if c.is_ok() { "ok" } else { "failed" }),
                td_num(&c.outcome.ranking.spin_orbitals.to_string(), f64::from(c.outcome.ranking.spin_orbitals)),
                match counted {
                    Some(k) => td_num(&esc(&counted_cell(k, s.tolerance, unit)), f64::from(k.spin_orbitals)),
                    None => r#"<td class="num failed">failed</td>"#.into(),
                },
            ];
            for m in 0..wf.models.len() {
                row.push(match c.outcome.ranking.totals.get(m) {
                    Some(Ok(t)) if c.is_ok() => td_num(&num(unit, t.perdew_zunger), t.perdew_zunger),
                    Some(Err(_)) if c.is_ok() => r#"<td class="num failed">incomplete</td>"#.into(),
                    _ => r#"<td class="num failed">failed</td>"#.into(),
                });
            }
            row
        })
        .collect();
    let groups = chart::pz_groups(report);
    format!(
        "<section id=\"perdew-zunger\">\n<h2>Perdew–Zunger correction per calculation</h2>\n\
         <p class=\"lead\">The correction −Σ<sub>i</sub> g<sub>i</sub> δ<sub>i</sub> (g = 2 for a restricted orbital) that \
         removing every orbital's self-interaction would add to the total energy, under each model. It sums over every orbital \
         of a calculation, counted in the set statistics or not; <i>counted</i> in the table says how many of its spin-orbitals \
         the statistics count (a sum over records left out carries their error bars, in the calculation's table).</p>\n\
         <figure class=\"chart\" id=\"fig-pz\">\n{}<figcaption><b>Perdew–Zunger correction per calculation and model</b>, {u}. \
         Each model keeps its colour and fill pattern; failed calculations have no bars (their orbital sets are incomplete); \
         a * after a name marks a calculation with records left out of the statistics. The numbers are in the table \
         below.</figcaption>\n</figure>\n{}</section>\n",
        pz_chart(&groups, &wf.models.iter().map(|m| m.name.clone()).collect::<Vec<_>>(), unit),
        table("table-pz", &format!("Perdew–Zunger correction per calculation; {u}."), &head, &rows, true)
    )
}

fn cancellation_section(report: &BatchReport, unit: EnergyUnit) -> String {
    let series = chart::cancellation_series(report);
    let counted = coverage_html(report, unit);
    format!(
        "<section id=\"cancellation\">\n<h2>Cancellation of the self-repulsion</h2>\n\
         <p class=\"lead\">The share −E<sub>x</sub>/J of each orbital's Hartree self-repulsion J that a model's exchange \
         self-energy cancels; exact exchange cancels all of it (ratio 1). Below the line a model's exchange leaves part of J \
         uncancelled, above it it cancels more than J.</p>\n\
         <figure class=\"chart\" id=\"fig-cancellation\">\n{}<figcaption><b>Cancellation ratio −E<sub>x</sub>/J against J</b>, \
         one colour and marker shape per model, the records the set statistics count (as for the mean −E<sub>x</sub>/J of the \
         models' table: {counted}). The dashed line at 1 is exact exchange. Horizontal error bars: the bar of J; vertical: \
         (σ<sub>Ex</sub> + c·σ<sub>J</sub>)/J, the first-order worst case from the bars of E<sub>x</sub> and J.</figcaption>\n\
         </figure>\n</section>\n",
        cancellation_chart(&series, unit, nothing_counted(report))
    )
}

fn tags_section(report: &BatchReport, unit: EnergyUnit) -> String {
    let s = report.summary;
    if s.tags.is_empty() {
        return String::new();
    }
    let u = unit.symbol();
    let wf = report.workflow;
    let mut head = vec![th("tag", false), th("calculations", true), th("counted", true), th("left out", false)];
    head.extend((0..wf.models.len()).map(|m| format!(r#"<th class="num" scope="col">{}{}</th>"#, key(&look(m)), esc(&wf.models[m].name))));
    let rows: Vec<Vec<String>> = s
        .tags
        .iter()
        .map(|t| {
            let c = &t.coverage;
            let mut row = vec![
                td(&t.tag),
                td_num(&t.calculations.to_string(), t.calculations as f64),
                td_num(&format!("{} of {}", c.spin_orbitals, c.total_spin_orbitals()), f64::from(c.spin_orbitals)),
                td(&left_out_cell(c, s.tolerance, unit)),
            ];
            row.extend(t.models.iter().map(|st| match st {
                Some(st) => td_num(&num(unit, st.mean_abs), st.mean_abs),
                None => td("—"),
            }));
            row
        })
        .collect();
    format!(
        "<section id=\"tags\">\n<h2>By tag</h2>\n{}</section>\n",
        table(
            "table-tags",
            &format!("Mean |δ| per spin-orbital over the counted records of the completed calculations carrying each tag; {u}."),
            &head,
            &rows,
            false
        )
    )
}

fn worst_section(report: &BatchReport, unit: EnergyUnit) -> String {
    let s = report.summary;
    let u = unit.symbol();
    let head = [
        th("#", true),
        th("calculation", false),
        th("orbital", false),
        th("spin", false),
        th("model", false),
        th(&format!("δ ({u})"), true),
        th(&format!("J ({u})"), true),
        th("flags", false),
        th("counted", false),
    ];
    let rows: Vec<Vec<String>> = s
        .worst
        .iter()
        .enumerate()
        .map(|(i, w)| {
            let errors = w.orbital.errors.as_ref();
            vec![
                td_num(&(i + 1).to_string(), (i + 1) as f64),
                td(&w.calculation),
                td(&w.orbital.label),
                td(w.orbital.spin.as_str()),
                model_cell(report, w.model),
                td_err(unit, w.self_interaction(), errors.map(|e| e.models[w.model].self_interaction)),
                td_err(unit, w.orbital.hartree, errors.map(|e| e.hartree)),
                flag_chips(&w.orbital),
                td(&counted_flag(w.left_out, s.tolerance, unit)),
            ]
        })
        .collect();
    format!(
        "<section id=\"worst\">\n<h2>The {} worst orbitals of the set</h2>\n\
         <p class=\"lead\">Every record of the completed calculations by |δ|, counted in the statistics or not: <i>counted</i> says \
         which, and why not.</p>\n{}</section>\n",
        s.worst.len(),
        table("table-worst", &format!("(orbital, model) pairs by |δ| over the completed calculations; {u}; error bars below each value."), &head, &rows, true)
    )
}

fn calculations_section(report: &BatchReport, unit: EnergyUnit) -> String {
    let wf = report.workflow;
    let u = unit.symbol();
    let mut out = format!(
        "<section id=\"calculations\">\n<h2>Calculations</h2>\n<p class=\"lead\">Each calculation's orbitals, worst first: the \
         Hartree self-repulsion J, the Xα value α* that would cancel it exactly, the norm ∫n<sub>i</sub> (below the occupation \
         when the box cuts the orbital off), then δ under each model, in {u} with its error bar below. E<sub>x</sub> and \
         E<sub>c</sub> of every model are in report.md, report.json and orbitals.csv.</p>\n"
    );
    for (i, c) in report.results.iter().enumerate() {
        let tags = if c.tags.is_empty() { String::new() } else { format!(" <span class=\"tags\">({})</span>", esc(&c.tags.join(", "))) };
        let _ = writeln!(out, "<h3 id=\"calc-{}\">{}{tags}</h3>", i + 1, esc(&c.name));
        if !c.is_ok() {
            out += "<p><b>Failed:</b> the orbitals below are incomplete and left out of the statistics and charts above.</p>\n<ul class=\"failures\">\n";
            for f in &c.outcome.failures {
                let _ = writeln!(out, "<li><code>{}</code></li>", esc(&f.error));
            }
            out += "</ul>\n";
        }
        if let Some(d) = &c.density {
            let ins = &d.inspection;
            let matched = ins.nuclei.iter().filter(|n| n.atom.is_some()).count();
            let _ = write!(
                out,
                "<p>Density check (<code>{}</code>): {:.4} electrons on the grid; {matched} of {} listed atoms found at density maxima",
                esc(&d.source),
                ins.electrons,
                ins.atoms.len()
            );
            if let Some(sum) = &d.orbital_sum {
                let _ = write!(out, "; orbitals sum to the density within {:.1e} e", sum.integrated_abs_difference);
            }
            out += ".</p>\n";
            if !ins.flags.is_empty() {
                out += "<ul>\n";
                for f in &ins.flags {
                    let _ = writeln!(out, "<li><span class=\"flag\">{}</span> {}</li>", f.kind.as_str(), esc(&f.message));
                }
                out += "</ul>\n";
            }
        }
        let orbitals = &c.outcome.ranking.orbitals;
        if orbitals.is_empty() {
            out += "<p class=\"note\">No orbital could be analysed.</p>\n";
            continue;
        }
        let mut head = vec![
            th("#", true),
            th("orbital", false),
            th("spin", false),
            th(&format!("J ({u})"), true),
            th("α*", true),
            th("norm", true),
        ];
        head.extend((0..wf.models.len()).map(|m| format!(r#"<th class="num" scope="col">{}{}</th>"#, key(&look(m)), esc(&wf.models[m].name))));
        head.push(th("flags", false));
        let rows: Vec<Vec<String>> = orbitals
            .iter()
            .enumerate()
            .map(|(r, o)| {
                let mut row = vec![
                    td_num(&(r + 1).to_string(), (r + 1) as f64),
                    td(&o.label),
                    td(o.spin.as_str()),
                    td_err(unit, o.hartree, o.errors.as_ref().map(|e| e.hartree)),
                    td_num(&format!("{:.4}", o.optimal_alpha), o.optimal_alpha),
                    td_num(&format!("{:.4}", o.norm), o.norm),
                ];
                for (m, e) in o.models.iter().enumerate() {
                    row.push(td_err(unit, e.self_interaction, o.errors.as_ref().map(|err| err.models[m].self_interaction)));
                }
                row.push(flag_chips(o));
                row
            })
            .collect();
        out += &table(
            &format!("table-calc-{}", i + 1),
            &format!("Ranked by |δ| under {}; {u}.", esc(&wf.models[wf.rank_by].name)),
            &head,
            &rows,
            true,
        );
    }
    out += "</section>\n";
    out
}

/// Opens an SVG chart with its text alternative.
fn svg_open(id: &str, height: f64, title: &str, desc: &str) -> String {
    format!(
        "<svg id=\"{id}\" class=\"plot\" role=\"img\" aria-labelledby=\"{id}-title {id}-desc\" viewBox=\"0 0 {W} {h}\" \
         width=\"{W}\" height=\"{h}\" xmlns=\"http://www.w3.org/2000/svg\" font-family=\"system-ui, 'DejaVu Sans', sans-serif\" \
         font-size=\"13\" fill=\"{INK}\">\n<title id=\"{id}-title\">{}</title>\n<desc id=\"{id}-desc\">{}</desc>\n",
        esc(title),
        esc(desc),
        h = n1(height)
    )
}

/// A name cut to `max` characters with an ellipsis in the middle (names in a series often
/// differ only at the end).
fn clip(name: &str, max: usize) -> String {
    let max = max.max(3);
    let chars: Vec<char> = name.chars().collect();
    if chars.len() <= max {
        return name.to_string();
    }
    let tail = (max - 1) / 2;
    let head = max - 1 - tail;
    format!("{}…{}", chars[..head].iter().collect::<String>(), chars[chars.len() - tail..].iter().collect::<String>())
}

/// Rough width of a label at 13 px, for laying out legends.
fn text_width(s: &str) -> f64 {
    7.4 * s.chars().count() as f64
}

/// Vertical offset of the `k`-th record inside its row: the golden-ratio sequence, so records
/// spread evenly and each keeps its height in every row.
fn spread(k: usize) -> f64 {
    (k as f64 * 0.618_033_988_749_895).fract() - 0.5
}

/// The δ distribution: one row per model, |δ| on a log axis.
pub fn delta_chart(rows: &[DeltaRow], unit: EnergyUnit, empty: &str) -> String {
    let (u, sym) = (unit.per_hartree(), unit.symbol());
    let (left, right, top, row_h, bottom) = (178.0, 150.0, 46.0, 46.0, 58.0);
    let height = top + rows.len() as f64 * row_h + bottom;
    let desc = rows
        .iter()
        .map(|r| match r.median_abs {
            Some(med) => {
                let max = r.points.iter().map(|p| p.self_interaction.abs()).fold(0.0, f64::max);
                format!("{}: median |δ| {} {sym}, largest {} {sym}", r.model, num(unit, med), num(unit, max))
            }
            None => format!("{}: no record to compare", r.model),
        })
        .collect::<Vec<_>>()
        .join("; ");
    let mut out = svg_open("chart-delta", height, &format!("Self-interaction error |δ| per orbital record and model, {sym}, logarithmic axis"), &desc);
    let positive: Vec<f64> =
        rows.iter().flat_map(|r| r.points.iter().map(|p| p.self_interaction.abs() * u)).filter(|v| *v > 0.0 && v.is_finite()).collect();
    if positive.is_empty() {
        let _ = write!(out, r#"<text x="{}" y="{}" text-anchor="middle" fill="{MUTED}">{}</text></svg>"#, W / 2.0, height / 2.0, esc(empty));
        return out + "\n";
    }
    let (lo, hi) = Log10::decades(positive.iter().copied().fold(f64::INFINITY, f64::min), positive.iter().copied().fold(0.0, f64::max));
    let x = Log10 { domain: (lo, hi), range: (left, W - right) };
    let axis_y = top + rows.len() as f64 * row_h;

    // Legend.
    let grey = Look { colour: MUTED, stroke: MUTED, shape: svg::Shape::Circle, pattern: 0 };
    let _ = write!(
        out,
        r#"<g font-size="12.5" fill="{MUTED}">{}<text x="{}" y="22">δ &gt; 0: self-repulsion left over</text>{}<text x="{}" y="22">δ &lt; 0: more than cancelled</text><path d="M{},10V30" stroke="{INK}" stroke-width="3"/><text x="{}" y="22">median |δ|</text><path d="M{},18H{}" stroke="{MUTED}" stroke-opacity=".55" stroke-width="1.4"/><text x="{}" y="22">error bar</text></g>"#,
        marker(&grey, left + 6.0, 18.0, 4.6, false, ""),
        left + 18.0,
        marker(&grey, left + 246.0, 18.0, 4.6, true, ""),
        left + 258.0,
        left + 470.0,
        left + 480.0,
        left + 590.0,
        left + 620.0,
        left + 628.0
    );

    // Bands, decade grid and axis.
    for m in 0..rows.len() {
        if m % 2 == 0 {
            let _ = write!(out, r##"<rect x="{}" y="{}" width="{}" height="{row_h}" fill="#f3f5f8"/>"##, n1(left), n1(top + m as f64 * row_h), n1(W - right - left));
        }
    }
    let decades = (hi / lo).log10().round() as i32;
    let mut ticks = String::new();
    for k in 0..=decades {
        let d = lo * 10f64.powi(k);
        let px = x.clamped(d);
        let _ = write!(out, r#"<path d="M{0},{1}V{2}" stroke="{GRID}" stroke-width="1"/>"#, n1(px), n1(top), n1(axis_y));
        let _ = write!(ticks, r#"<path d="M{0},{1}V{2}" stroke="{INK}"/><text x="{0}" y="{3}" text-anchor="middle">{4}</text>"#, n1(px), n1(axis_y), n1(axis_y + 6.0), n1(axis_y + 21.0), decade_label(d));
        if k < decades {
            for f in [2.0, 5.0] {
                let px = x.clamped(d * f);
                let _ = write!(out, r#"<path d="M{0},{1}V{2}" stroke="{GRID}" stroke-dasharray="2 3"/>"#, n1(px), n1(top), n1(axis_y));
                let _ = write!(ticks, r#"<path d="M{0},{1}V{2}" stroke="{INK}"/>"#, n1(px), n1(axis_y), n1(axis_y + 3.5));
            }
        }
    }
    let _ = write!(
        out,
        r#"<path d="M{l},{a}H{r}" stroke="{INK}"/>{ticks}<text x="{c}" y="{t}" text-anchor="middle" font-size="13.5">|δ| per orbital record ({sym}), logarithmic scale</text>"#,
        l = n1(left),
        a = n1(axis_y),
        r = n1(W - right),
        c = n1(0.5 * (left + W - right)),
        t = n1(axis_y + 44.0)
    );

    for (m, row) in rows.iter().enumerate() {
        let lk = look(m);
        let cy = top + (m as f64 + 0.5) * row_h;
        let _ = write!(
            out,
            r#"<g>{}<text x="34" y="{}" font-weight="600">{}<title>{}</title></text></g>"#,
            marker(&lk, 20.0, cy, 5.0, false, ""),
            n1(cy + 4.5),
            esc(&clip(&row.model, 18)),
            esc(&row.model)
        );
        let mut bars = String::new();
        let mut marks = String::new();
        for (k, p) in row.points.iter().enumerate() {
            let y = cy + 28.0 * spread(k);
            let v = p.self_interaction.abs() * u;
            let err = p.error.map(|e| e * u);
            if let Some(e) = err {
                let _ = write!(bars, r#"<path d="M{},{y:.1}H{}"/>"#, n1(x.clamped(v - e)), n1(x.clamped(v + e)));
            }
            let tip = format!(
                "<title>{} / {} · {}: δ = {}{} {sym}</title>",
                esc(&p.calculation),
                esc(&p.label),
                esc(&row.model),
                num(unit, p.self_interaction),
                p.error.map_or(String::new(), |e| format!(" ± {}", num(unit, e)))
            );
            marks += &marker(&lk, x.clamped(v), y, 4.6, p.self_interaction < 0.0, &tip);
        }
        let _ = write!(out, r#"<g stroke="{}" stroke-opacity=".32" stroke-width="1.2">{bars}</g><g>{marks}</g>"#, lk.stroke);
        if let Some(med) = row.median_abs {
            let px = x.clamped(med * u);
            let _ = write!(
                out,
                r#"<path d="M{0},{1}V{2}" stroke="{INK}" stroke-width="3"><title>{3}: median |δ| = {4} {sym}</title></path><text x="{5}" y="{6}" font-size="12.5">median {4}</text>"#,
                n1(px),
                n1(cy - 19.0),
                n1(cy + 19.0),
                esc(&row.model),
                num(unit, med),
                n1(W - right + 14.0),
                n1(cy + 4.5)
            );
        }
    }
    out + "</svg>\n"
}

/// Legend items (look index, name) laid out in lines across the chart; returns the SVG and the
/// height used.
fn legend_rows(names: &[String], x0: f64, y0: f64, swatch: impl Fn(usize, f64, f64) -> String) -> (String, f64) {
    let mut out = String::new();
    let (mut x, mut y) = (x0, y0);
    for (i, name) in names.iter().enumerate() {
        let label = clip(name, 24);
        let w = 26.0 + text_width(&label) + 22.0;
        if x + w > W - 10.0 && x > x0 {
            x = x0;
            y += 24.0;
        }
        let _ = write!(out, r#"{}<text x="{}" y="{}">{}</text>"#, swatch(i, x, y), n1(x + 24.0), n1(y + 4.5), esc(&label));
        x += w;
    }
    (out, y - y0 + 24.0)
}

/// Perdew–Zunger corrections: grouped bars, one group per calculation.
pub fn pz_chart(groups: &[PzGroup], models: &[String], unit: EnergyUnit) -> String {
    let (u, sym) = (unit.per_hartree(), unit.symbol());
    // Narrow groups (many calculations) get slanted names below them.
    let slanted = (W - 108.0) / (groups.len().max(1) as f64) < 90.0;
    let (left, right, plot_h, bottom) = (92.0, 16.0, 330.0, if slanted { 150.0 } else { 66.0 });
    let (legend, legend_h) = legend_rows(models, left, 20.0, |i, x, y| {
        format!(r#"<rect x="{}" y="{}" width="16" height="14" fill="url(#pz-fill-{i})" stroke="{}"/>"#, n1(x), n1(y - 7.0), look(i).stroke)
    });
    let top = 20.0 + legend_h + 8.0;
    let height = top + plot_h + bottom;
    let desc = groups
        .iter()
        .map(|g| match &g.values {
            Some(v) => format!(
                "{}: {}",
                g.calculation,
                models.iter().zip(v).map(|(m, v)| format!("{m} {}", num(unit, *v))).collect::<Vec<_>>().join(", ")
            ),
            None => format!("{}: failed", g.calculation),
        })
        .collect::<Vec<_>>()
        .join("; ");
    let mut out = svg_open("chart-pz", height, &format!("Perdew–Zunger correction per calculation and model, {sym}"), &format!("{desc} ({sym})."));
    let _ = write!(out, "<defs>{}</defs><g font-size=\"12.5\">{legend}</g>", svg::patterns("pz-fill", models.len()));
    let values: Vec<f64> = groups.iter().filter_map(|g| g.values.as_ref()).flatten().map(|v| v * u).collect();
    if values.is_empty() || groups.is_empty() {
        let _ = write!(out, r#"<text x="{}" y="{}" text-anchor="middle" fill="{MUTED}">No completed calculation: nothing to plot.</text></svg>"#, W / 2.0, top + plot_h / 2.0);
        return out + "\n";
    }
    let lo = values.iter().copied().fold(0.0, f64::min);
    let hi = values.iter().copied().fold(0.0, f64::max);
    let (ticks, step) = nice_ticks(lo, hi, 6);
    let y = Linear { domain: (ticks[0], *ticks.last().unwrap_or(&1.0)), range: (top + plot_h, top) };
    for t in &ticks {
        let py = y.at(*t);
        let _ = write!(
            out,
            r#"<path d="M{l},{p}H{r}" stroke="{GRID}"/><text x="{tx}" y="{ty}" text-anchor="end">{lab}</text>"#,
            l = n1(left),
            p = n1(py),
            r = n1(W - right),
            tx = n1(left - 8.0),
            ty = n1(py + 4.5),
            lab = tick_label(*t, step)
        );
    }
    let _ = write!(
        out,
        r#"<text transform="translate(20,{}) rotate(-90)" text-anchor="middle" font-size="13.5">−Σ g·δ ({sym})</text>"#,
        n1(top + plot_h / 2.0)
    );
    let gw = (W - right - left) / groups.len() as f64;
    let bw = (gw * 0.84 / models.len().max(1) as f64).min(48.0);
    let gap = if bw > 6.0 { 1.0 } else { 0.0 };
    for (g, group) in groups.iter().enumerate() {
        let gx = left + g as f64 * gw;
        let cx = gx + gw / 2.0;
        let ly = top + plot_h + if slanted { 14.0 } else { 22.0 };
        // A * marks a calculation with records left out of the statistics.
        let mark = if group.left_out > 0 { " *" } else { "" };
        let (anchor, turn, label) = if slanted {
            ("end", format!(r#" transform="rotate(-40 {} {})""#, n1(cx), n1(ly)), clip(&group.calculation, 20) + mark)
        } else {
            ("middle", String::new(), clip(&group.calculation, ((gw / 8.0) as usize).saturating_sub(mark.len())) + mark)
        };
        let _ = write!(
            out,
            r#"<text x="{}" y="{}" text-anchor="{anchor}"{turn} font-weight="600">{}<title>{}{}</title></text>"#,
            n1(cx),
            n1(ly),
            esc(&label),
            esc(&group.calculation),
            if group.left_out > 0 { format!(" ({} spin-orbitals left out of the statistics)", group.left_out) } else { String::new() }
        );
        if g > 0 {
            let _ = write!(out, r#"<path d="M{0},{1}V{2}" stroke="{GRID}" stroke-dasharray="3 3"/>"#, n1(gx), n1(top), n1(top + plot_h + 8.0));
        }
        let Some(vals) = &group.values else {
            let _ = write!(out, r##"<text x="{}" y="{}" text-anchor="middle" fill="#b3400a" font-style="italic">failed: no totals</text>"##, n1(cx), n1(y.at(0.0) - 8.0));
            continue;
        };
        let x0 = cx - bw * vals.len() as f64 / 2.0;
        for (m, v) in vals.iter().enumerate() {
            let (a, b) = (y.at(0.0), y.at(v * u));
            let _ = write!(
                out,
                r#"<rect x="{}" y="{}" width="{}" height="{}" fill="url(#pz-fill-{m})" stroke="{}" stroke-width="1"><title>{} · {}: {} {sym}</title></rect>"#,
                n1(x0 + m as f64 * bw + gap),
                n1(a.min(b)),
                n1(bw - 2.0 * gap),
                n1((a - b).abs().max(0.5)),
                look(m).stroke,
                esc(&group.calculation),
                esc(&models[m]),
                num(unit, *v)
            );
        }
    }
    let _ = write!(out, r#"<path d="M{},{z}H{}" stroke="{INK}" stroke-width="1.4"/>"#, n1(left), n1(W - right), z = n1(y.at(0.0)));
    let _ = write!(out, r#"<text x="{}" y="{}" text-anchor="middle" font-size="13.5">calculation</text>"#, n1(0.5 * (left + W - right)), n1(top + plot_h + bottom - 16.0));
    out + "</svg>\n"
}

/// The cancellation ratio −E_x/J against J, one series per model.
pub fn cancellation_chart(series: &[CancellationSeries], unit: EnergyUnit, empty: &str) -> String {
    let (u, sym) = (unit.per_hartree(), unit.symbol());
    // Tall enough for the legend beside it.
    let (left, right, top, plot_h, bottom) = (84.0, 200.0, 24.0, (24.0 * (series.len() as f64 + 4.0)).max(420.0), 62.0);
    let height = top + plot_h + bottom;
    let desc = series
        .iter()
        .filter(|s| !s.points.is_empty())
        .map(|s| {
            let lo = s.points.iter().map(|p| p.ratio).fold(f64::INFINITY, f64::min);
            let hi = s.points.iter().map(|p| p.ratio).fold(f64::NEG_INFINITY, f64::max);
            let below = s.points.iter().filter(|p| p.ratio < 1.0).count();
            format!("{}: from {lo:.3} to {hi:.3}, {below} of {} below 1", s.model, s.points.len())
        })
        .collect::<Vec<_>>()
        .join("; ");
    let mut out = svg_open(
        "chart-cancellation",
        height,
        &format!("Cancellation ratio −E_x/J against the Hartree self-repulsion J ({sym}), per model; exact exchange at 1"),
        &if desc.is_empty() { "No record to plot.".to_string() } else { format!("−E_x/J per model: {desc}.") },
    );
    let points: Vec<(f64, f64)> = series.iter().flat_map(|s| s.points.iter().map(|p| (p.hartree * u, p.ratio))).collect();
    if points.is_empty() {
        let _ = write!(out, r#"<text x="{}" y="{}" text-anchor="middle" fill="{MUTED}">{}</text></svg>"#, W / 2.0, height / 2.0, esc(empty));
        return out + "\n";
    }
    let (xlo, xhi) = points.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| (a.min(p.0), b.max(p.0)));
    let (ylo, yhi) = points.iter().fold((1.0f64, 1.0f64), |(a, b), p| (a.min(p.1), b.max(p.1)));
    // A little room beyond the outermost points, so that no marker sits on an axis.
    let (xpad, ypad) = (0.02 * (xhi - xlo), 0.02 * (yhi - ylo));
    let (xt, xs) = nice_ticks(xlo - xpad, xhi + xpad, 8);
    let (yt, ys) = nice_ticks(ylo - ypad, yhi + ypad, 6);
    let x = Linear { domain: (xt[0], *xt.last().unwrap_or(&1.0)), range: (left, W - right) };
    let y = Linear { domain: (yt[0], *yt.last().unwrap_or(&1.0)), range: (top + plot_h, top) };
    let axis_y = top + plot_h;
    for t in &xt {
        let px = x.at(*t);
        let _ = write!(
            out,
            r#"<path d="M{0},{1}V{2}" stroke="{GRID}"/><path d="M{0},{2}V{3}" stroke="{INK}"/><text x="{0}" y="{4}" text-anchor="middle">{5}</text>"#,
            n1(px),
            n1(top),
            n1(axis_y),
            n1(axis_y + 6.0),
            n1(axis_y + 21.0),
            tick_label(*t, xs)
        );
    }
    for t in &yt {
        let py = y.at(*t);
        let _ = write!(
            out,
            r#"<path d="M{0},{1}H{2}" stroke="{GRID}"/><text x="{3}" y="{4}" text-anchor="end">{5}</text>"#,
            n1(left),
            n1(py),
            n1(W - right),
            n1(left - 8.0),
            n1(py + 4.5),
            tick_label(*t, ys)
        );
    }
    let _ = write!(
        out,
        r#"<path d="M{l},{t}V{a}H{r}" fill="none" stroke="{INK}"/><text x="{c}" y="{xt}" text-anchor="middle" font-size="13.5">Hartree self-repulsion J per orbital record ({sym})</text><text transform="translate(22,{m}) rotate(-90)" text-anchor="middle" font-size="13.5">cancellation −E{sub}x</tspan>/J</text>"#,
        l = n1(left),
        t = n1(top),
        a = n1(axis_y),
        r = n1(W - right),
        c = n1(0.5 * (left + W - right)),
        xt = n1(axis_y + 46.0),
        m = n1(top + plot_h / 2.0),
        sub = SUB
    );
    let one = y.at(1.0);
    let _ = write!(
        out,
        r#"<path d="M{l},{o}H{r}" stroke="{INK}" stroke-width="1.6" stroke-dasharray="7 4"/>"#,
        l = n1(left),
        o = n1(one),
        r = n1(W - right),
    );
    let _ = write!(
        out,
        r#"<defs><clipPath id="cancellation-clip"><rect x="{}" y="{}" width="{}" height="{}"/></clipPath></defs><g clip-path="url(#cancellation-clip)">"#,
        n1(left),
        n1(top),
        n1(W - right - left),
        n1(plot_h)
    );
    let mut marks = String::new();
    for (m, s) in series.iter().enumerate() {
        let lk = look(m);
        let mut bars = String::new();
        for p in &s.points {
            let (px, py) = (x.at(p.hartree * u), y.at(p.ratio));
            if let Some(e) = p.hartree_error {
                let _ = write!(bars, "M{},{}H{}", n1(x.at((p.hartree - e) * u)), n1(py), n1(x.at((p.hartree + e) * u)));
            }
            if let Some(e) = p.ratio_error {
                let _ = write!(bars, "M{},{}V{}", n1(px), n1(y.at(p.ratio - e)), n1(y.at(p.ratio + e)));
            }
            let tip = format!(
                "<title>{} / {} · {}: J = {}{} {sym}, −E_x/J = {:.4}{}</title>",
                esc(&p.calculation),
                esc(&p.label),
                esc(&s.model),
                num(unit, p.hartree),
                p.hartree_error.map_or(String::new(), |e| format!(" ± {}", num(unit, e))),
                p.ratio,
                p.ratio_error.map_or(String::new(), |e| format!(" ± {e:.4}"))
            );
            marks += &marker(&lk, px, py, 4.6, false, &tip);
        }
        if !bars.is_empty() {
            let _ = write!(out, r#"<path d="{bars}" stroke="{}" stroke-opacity=".3" stroke-width="1.1" fill="none"/>"#, lk.stroke);
        }
    }
    let _ = write!(out, "</g><g>{marks}</g>");
    // Legend at the right.
    let lx = W - right + 24.0;
    let _ = write!(out, r#"<text x="{}" y="{}" font-weight="600">model</text>"#, n1(lx), n1(top + 10.0));
    let ly = top + 34.0 + 24.0 * series.len() as f64 + 8.0;
    let _ = write!(
        out,
        r#"<path d="M{},{y}H{}" stroke="{INK}" stroke-width="1.6" stroke-dasharray="7 4"/><text x="{}" y="{}">exact exchange,</text><text x="{}" y="{}">−E{SUB}x</tspan> = J</text>"#,
        n1(lx - 2.0),
        n1(lx + 14.0),
        n1(lx + 20.0),
        n1(ly + 4.5),
        n1(lx + 20.0),
        n1(ly + 21.0),
        y = n1(ly)
    );
    for (m, s) in series.iter().enumerate() {
        let ly = top + 34.0 + 24.0 * m as f64;
        let _ = write!(out, r#"{}<text x="{}" y="{}">{}</text>"#, marker(&look(m), lx + 6.0, ly, 5.0, false, ""), n1(lx + 20.0), n1(ly + 4.5), esc(&clip(&s.model, 20)));
    }
    out + "</svg>\n"
}

#[cfg(test)]
mod tests;
