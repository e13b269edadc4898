//! `report.html` of the demo workflow: under 2 MB, and in a real browser: headless Chromium renders it (the
//! screenshot must show the charts in the model colours), its DOM must hold every chart and
//! table with one mark per (orbital, model) and the numbers of `report.json`, and a click on a
//! table header must sort the rows. Skipped with a notice where no Chromium is installed (CI
//! installs it, see `.ci/run`, and there a missing browser fails the test).

use crate::common::trustworthy;
use serde_json::Value;
use sixray::report::EnergyUnit;
use std::io::Write as _;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The browser on PATH, if any.
fn chromium(test: &str) -> Option<PathBuf> {
    let found = std::env::var_os("PATH").and_then(|paths| {
        std::env::split_paths(&paths)
            .flat_map(|dir| ["chromium", "chromium-browser"].map(|name| dir.join(name)))
            .find(|p| p.is_file())
    });
    if found.is_none() {
        assert!(std::env::var_os("CI").is_none(), "{test}: CI must install chromium (.ci/run does)");
        let _ = writeln!(std::io::stderr(), "skipping {test}: no chromium on PATH (apt-get install chromium)");
    }
    found
}

/// Runs headless Chromium with a fresh profile on `page` plus `extra` arguments; returns its
/// standard output. Ends it if it hangs (a guard, not a timing test).
fn run_browser(browser: &Path, page: &Path, extra: &[&str]) -> String {
    let profile = tempfile::tempdir().unwrap();
    let out = tempfile::NamedTempFile::new().unwrap();
    let mut child = Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--hide-scrollbars",
        ])
        .arg(format!("--user-data-dir={}", profile.path().display()))
        .args(extra)
        .arg(format!("file://{}", page.display()))
        .stdin(Stdio::null())
        .stdout(out.reopen().unwrap())
        .stderr(Stdio::null())
        .spawn()
        .expect("start chromium");
    let start = Instant::now();
    let status = loop {
        if let Some(s) = child.try_wait().unwrap() {
            break s;
        }
        if start.elapsed() > Duration::from_secs(180) {
            let _ = child.kill();
            panic!("chromium did not finish on {}", page.display());
        }
        std::thread::sleep(Duration::from_millis(50));
    };
    assert!(status.success(), "chromium failed on {}: {status}", page.display());
    std::fs::read_to_string(out.path()).unwrap()
}

/// Decoded RGB(A) pixels of a PNG: (width, height, channels, bytes).
fn decode_png(path: &Path) -> (u32, u32, usize, Vec<u8>) {
    let decoder = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(path).unwrap()));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    buf.truncate(info.buffer_size());
    assert_eq!(info.bit_depth, png::BitDepth::Eight, "screenshots are 8-bit");
    let channels = match info.color_type {
        png::ColorType::Rgb => 3,
        png::ColorType::Rgba => 4,
        other => panic!("unexpected screenshot colour type {other:?}"),
    };
    (info.width, info.height, channels, buf)
}

fn hex(c: &str) -> [u8; 3] {
    let v = u32::from_str_radix(c.trim_start_matches('#'), 16).unwrap();
    [(v >> 16) as u8, (v >> 8) as u8, v as u8]
}

/// Screenshots `page` at 1280 × 2000 and checks that it shows a page with the six model colours.
fn check_screenshot(browser: &Path, page: &Path, shot: &Path) {
    let _ = std::fs::remove_file(shot);
    run_browser(browser, page, &[&format!("--screenshot={}", shot.display()), "--window-size=1280,2000"]);
    let (width, height, channels, pixels) = decode_png(shot);
    assert_eq!((width, height), (1280, 2000));
    let rgb: Vec<[u8; 3]> = pixels.chunks_exact(channels).map(|p| [p[0], p[1], p[2]]).collect();
    let inked = rgb.iter().filter(|p| p.iter().any(|&c| c < 235)).count() as f64 / rgb.len() as f64;
    // Text, tables and charts cover several percent of the first screen (8 % when written); a
    // blank or error page (one line of text) covers well under one percent.
    assert!(inked > 0.04, "{}: only {:.2} % of the screenshot is not white", page.display(), 100.0 * inked);
    let mut distinct: Vec<[u8; 3]> = rgb.clone();
    distinct.sort_unstable();
    distinct.dedup();
    assert!(distinct.len() > 64, "{}: only {} distinct colours", page.display(), distinct.len());
    // The first six colours of the palette fill the six models' markers, keys and bars (each
    // covered about a thousand pixels or more when written).
    for colour in ["#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9"] {
        let c = hex(colour);
        let n = rgb.iter().filter(|p| p.iter().zip(c).all(|(a, b)| a.abs_diff(b) <= 6)).count();
        assert!(n >= 100, "{}: colour {colour} on {n} pixels", page.display());
    }
}

/// The page's number formatting: the unit's decimals, a true minus sign.
fn shown(unit: EnergyUnit, hartree: f64) -> String {
    unit.format(hartree).replace('-', "−")
}

#[test]
fn the_demo_report_is_small_and_renders_in_a_browser() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("reports");
    let wf = root().join("workflows/samples.yaml");
    let run = Command::new(env!("CARGO_BIN_EXE_sixray"))
        .args(["batch", wf.to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet", "--date", "2025-03-14"])
        .output()
        .unwrap();
    assert_eq!(run.status.code(), Some(0), "{}", String::from_utf8_lossy(&run.stderr));
    let page = out.join("report.html");
    // Checked without a browser, so that they hold wherever the tests run.
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(html.len() < 2 * 1024 * 1024, "report.html is {} bytes", html.len());
    assert!(html.contains("<dt>Date</dt><dd>2025-03-14</dd>"), "the date given");

    let Some(browser) = chromium("the_demo_report_is_small_and_renders_in_a_browser") else { return };
    let report: Value = serde_json::from_slice(&std::fs::read(out.join("report.json")).unwrap()).unwrap();
    let models: Vec<&str> = report["models"].as_array().unwrap().iter().map(|m| m["name"].as_str().unwrap()).collect();
    assert_eq!(models.len(), 6, "the demo compares six models");

    // Screenshots: a page, not a blank; the model colours of the charts are on it. Also with
    // the script cut out, as a reader with scripts off sees it.
    let script = html.find("<script>").unwrap();
    let script_end = html[script..].find("</script>").unwrap() + script + "</script>".len();
    let without_script = out.join("no-script.html");
    std::fs::write(&without_script, format!("{}{}", &html[..script], &html[script_end..])).unwrap();
    for p in [&page, &without_script] {
        check_screenshot(&browser, p, &dir.path().join("shot.png"));
    }

    // DOM after scripts ran.
    let dom = run_browser(&browser, &page, &["--dump-dom"]);
    for id in ["verdict", "chart-delta", "chart-pz", "chart-cancellation", "table-models", "table-pz", "table-tags", "table-worst"] {
        assert!(dom.contains(&format!("id=\"{id}\"")), "{id} missing from the DOM");
    }
    let calcs = report["calculations"].as_array().unwrap();
    for i in 1..=calcs.len() {
        assert!(dom.contains(&format!("id=\"table-calc-{i}\"")), "table-calc-{i} missing");
    }
    // The sorting script ran: every header of the sortable tables became a button.
    let headers = dom.matches("<th ").count();
    assert!(headers > 40 && dom.matches("<button type=\"button\"").count() == headers, "{headers} headers");
    // Every (orbital, model) the set statistics count is drawn with its δ and error bar from
    // report.json, in mEh; the records left out (the coarse grid's) are not.
    let unit = EnergyUnit::Millihartree;
    let tolerance = report["summary"]["tolerance"].as_f64().unwrap();
    let (mut marks, mut records, mut left_out) = (0, 0, 0);
    for c in calcs {
        for o in c["orbitals"].as_array().unwrap() {
            records += 1;
            let counted = trustworthy(o, tolerance);
            left_out += usize::from(!counted);
            for m in &models {
                let d = o["models"][m]["self_interaction"].as_f64().unwrap();
                let e = o["errors"]["models"][m]["self_interaction"].as_f64().unwrap();
                let tip = format!("{} / {} · {m}: δ = {} ± {} mEh", c["name"].as_str().unwrap(), o["label"].as_str().unwrap(), shown(unit, d), shown(unit, e));
                assert_eq!(dom.contains(&tip), counted, "{tip}");
                marks += usize::from(counted);
            }
        }
    }
    assert!(left_out > 0 && marks > 0, "the demo has records of both kinds");
    assert_eq!(dom.matches(": δ = ").count(), marks, "one δ mark per counted (orbital, model)");
    assert_eq!(dom.matches(": J = ").count(), marks, "one cancellation mark per counted (orbital, model)");
    // The verdict counts what report.json counts.
    let flags = report["summary"]["flags"].as_object().unwrap();
    let flagged: usize = calcs
        .iter()
        .flat_map(|c| c["orbitals"].as_array().unwrap())
        .filter(|o| !o["flags"].as_array().unwrap().is_empty())
        .count();
    assert!(dom.contains(&format!("{flagged} of {records} orbital records flagged")), "verdict");
    for (f, n) in flags {
        assert!(dom.contains(&format!("{n} <span class=\"flag\">{f}</span>")), "flag count {f}");
    }

    // A click on a header sorts the rows, then reverses them (read through a page beside the
    // report that opens it in a frame).
    let harness = out.join("sort-check.html");
    std::fs::write(
        &harness,
        r#"<!DOCTYPE html><html><body><iframe id="f" src="report.html" width="1280" height="900"></iframe><pre id="out">pending</pre>
<script>
document.getElementById("f").addEventListener("load", function () {
  var out = document.getElementById("out");
  try {
    var t = this.contentDocument.getElementById("table-worst");
    var th = t.tHead.rows[0].cells[5];
    var col = function () { return Array.prototype.map.call(t.tBodies[0].rows, function (r) { return Number(r.cells[5].getAttribute("data-v")); }); };
    th.querySelector("button").click();
    var asc = col(), first = th.getAttribute("aria-sort");
    th.querySelector("button").click();
    out.textContent = JSON.stringify({asc: asc, desc: col(), states: [first, th.getAttribute("aria-sort")]});
  } catch (e) { out.textContent = "error: " + e; }
});
</script></body></html>
"#,
    )
    .unwrap();
    let dom = run_browser(&browser, &harness, &["--allow-file-access-from-files", "--dump-dom"]);
    let start = dom.find("<pre id=\"out\">").expect("harness output") + "<pre id=\"out\">".len();
    let text = &dom[start..start + dom[start..].find("</pre>").unwrap()];
    let sorted: Value = serde_json::from_str(text).unwrap_or_else(|e| panic!("{e}: {text}"));
    let column = |key: &str| -> Vec<f64> { sorted[key].as_array().unwrap().iter().map(|v| v.as_f64().unwrap()).collect() };
    let mut worst: Vec<f64> = report["summary"]["worst"].as_array().unwrap().iter().map(|w| w["self_interaction"].as_f64().unwrap()).collect();
    worst.sort_by(f64::total_cmp);
    assert_eq!(column("asc"), worst, "ascending by δ");
    worst.reverse();
    assert_eq!(column("desc"), worst, "then descending");
    assert_eq!(sorted["states"], serde_json::json!(["ascending", "descending"]));
}
