//! The HTML report parsed as a browser would (html5ever, through scraper):
//! every field present, nothing fetched from anywhere, and values that try
//! to inject markup (`<script>`, `"><img onerror=…>`, `</style>`, Unicode
//! direction controls, in keys and in values) shown as text.

mod common;

use std::path::Path;

use plumbline::report::{self, ReportOptions};
use scraper::{Html, Selector};

fn page(path: &Path, options: ReportOptions) -> (report::Report, Html) {
    let scan = common::full(path).unwrap();
    let report = report::build(&scan, options);
    let html = Html::parse_document(&report::html::render(&report, None));
    (report, html)
}

fn select<'a>(html: &'a Html, css: &str) -> Vec<scraper::ElementRef<'a>> {
    html.select(&Selector::parse(css).unwrap()).collect()
}

/// No script, no external resource, one style sheet.
fn self_contained(html: &Html) {
    assert!(select(html, "script").is_empty());
    assert!(select(html, "img, iframe, object, embed, link, video, audio").is_empty());
    assert_eq!(select(html, "style").len(), 1);
    for e in select(html, "[src], [href]") {
        let href = e.value().attr("href").unwrap_or("");
        assert!(href.starts_with('#'), "only links inside the page: {href}");
        assert!(e.value().attr("src").is_none());
    }
    for e in select(html, "*") {
        assert!(e.value().attrs().all(|(name, _)| !name.starts_with("on")), "an event attribute on {:?}", e.value().name());
    }
}

#[test]
fn every_field_of_the_demo_data_has_its_section() {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data/deliveries.parquet");
    let (report, html) = page(&demo, ReportOptions::default());
    self_contained(&html);
    let headings: Vec<String> = select(&html, "section.field > h2").iter().map(|h| h.text().collect()).collect();
    let paths: Vec<String> = report.fields.iter().map(|f| f.path.clone()).collect();
    assert_eq!(headings, paths);
    // Charts: a histogram for weight, a calendar for the pickup instants.
    let weight = report.fields.iter().position(|f| f.path == "parcel.weight_kg").unwrap();
    let bars = select(&html, &format!("section#f{weight} svg rect.bar"));
    let counts = report.fields[weight].stats.as_ref().unwrap().histogram.as_ref().unwrap().counts.len();
    assert_eq!(bars.len(), counts);
    // Every tree link leads to a section.
    for a in select(&html, ".tree a") {
        let id = &a.value().attr("href").unwrap()[1..];
        assert_eq!(select(&html, &format!("section#{id}")).len(), 1, "{id}");
    }
    assert!(html.root_element().text().collect::<String>().contains("may be personal data"));
}

#[test]
fn values_that_try_to_inject_markup_stay_text() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("hostile.jsonl");
    let nasty = ["<script>alert(1)</script>", "\"><img src=x onerror=alert(1)>", "</style><b>bold</b>", "\u{202E}gnp.exe", "<!--", "]]>"];
    let mut rows = String::new();
    for (i, v) in nasty.iter().enumerate() {
        let row = serde_json::json!({ "note": v, "<script>key</script>": i, "\u{202E}rtl": v });
        rows.push_str(&format!("{row}\n"));
    }
    std::fs::write(&file, rows).unwrap();
    let (_, html) = page(&file, ReportOptions::default());
    self_contained(&html);
    assert!(select(&html, "b").is_empty(), "no injected element");
    let text: String = html.root_element().text().collect();
    assert!(text.contains("<script>alert(1)</script>"), "shown as text");
    assert!(text.contains("\"><img src=x onerror=alert(1)>"));
    assert!(text.contains("</style><b>bold</b>"));
    assert!(text.contains("<script>key</script>"), "field names too");
    assert!(text.contains("[U+202E]gnp.exe"), "direction controls shown as code points");
    assert!(!text.contains('\u{202E}'));
}

#[test]
fn no_examples_leaves_the_values_out() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("secret.jsonl");
    std::fs::write(&file, "{\"name\": \"Ada Quill\"}\n{\"name\": \"Ada Quill\"}\n").unwrap();
    let (_, html) = page(&file, ReportOptions { no_examples: true });
    let text: String = html.root_element().text().collect();
    assert!(!text.contains("Ada Quill"), "{text}");
    assert!(text.contains("Data values were left out"));
    let (_, shown) = page(&file, ReportOptions::default());
    assert!(shown.root_element().text().collect::<String>().contains("Ada Quill"));
}

/// Printed, a field's section may run onto the next page (keeping each
/// whole made a page per field: 32 pages with most of each blank for the
/// demo file, Chromium's print to PDF), but no table, chart or finding is
/// cut, and no heading ends a page.
#[test]
fn printing_keeps_tables_and_charts_whole_without_a_page_per_field() {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data/deliveries.parquet");
    let (_, html) = page(&demo, ReportOptions::default());
    let css: String = select(&html, "style").iter().flat_map(|s| s.text()).collect();
    let print = css.split("@media print").nth(1).expect("print rules");
    assert!(!print.contains("section.field{break-inside:avoid"), "{print}");
    assert!(print.contains("table,svg,.finding{break-inside:avoid}"), "{print}");
    assert!(print.contains("h2,h3{break-after:avoid}"), "{print}");
}

#[test]
fn a_field_of_distinct_values_says_no_value_stands_out() {
    // 30,000 distinct ids: past the exact top values, so summarised; the
    // summary keeps no value, as none occurs more than its bound.
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("ids.jsonl");
    let lines: String = (0..30_000).map(|i| format!("{{\"id\":{i}}}\n")).collect();
    std::fs::write(&path, lines).unwrap();
    let (report, html) = page(&path, ReportOptions::default());
    let stats = report.fields[0].stats.as_ref().unwrap();
    assert_eq!(stats.top.as_deref(), Some(&[][..]));
    assert_eq!(stats.top_exact, Some(false));
    let bound = stats.top_max_undercount.unwrap();
    assert_eq!(bound, 30_000 / (plumbline::profile::top::COUNTERS as u64 + 1));
    let text: String = html.root_element().text().collect();
    assert!(text.contains(&report::no_value_stands_out(bound)), "{text}");
}
