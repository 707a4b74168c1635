//! Round trip: record types generated from the demo data, read back as
//! definitions, fit the demo data with no verdict at all, and fit the later
//! drop with exactly the drift `sample-data/generate.rs` put in: the added
//! `co2_grams`, `rating` turned from whole to half stars, and
//! `courier.vehicle` left out of about a tenth of the rows.

mod common;

use std::path::{Path, PathBuf};
use std::sync::atomic::AtomicBool;

use plumbline::fit::verdict::Problem;
use plumbline::fit::{self, DefinitionLang, FitOptions, Severity};
use plumbline::source::OpenOptions;
use plumbline::types::{self, Lang, MixedChoice, Optionality, TimeChoice, TypeOptions};

fn sample(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name)
}

/// The targets that can be read back, as (generator, reader).
const READABLE: [(Lang, DefinitionLang); 4] = [
    (Lang::Scala, DefinitionLang::Scala),
    (Lang::SparkDdl, DefinitionLang::SparkDdl),
    (Lang::Rust, DefinitionLang::Rust),
    (Lang::JsonSchema, DefinitionLang::JsonSchema),
];

fn generated(data: &Path, lang: Lang, time: TimeChoice) -> String {
    let scan = common::full(data).unwrap();
    let options = TypeOptions { root: "Delivery".into(), optional: Optionality::Observed, mixed: MixedChoice::Widest, time };
    types::generate(&scan, lang, &options).code
}

fn fit_of(data: &Path, definition: &fit::Definition) -> fit::Fit {
    let scan = common::full(data).unwrap();
    fit::fit(&scan, OpenOptions::default(), definition, FitOptions::default(), &AtomicBool::new(false)).unwrap()
}

fn verdict_list(fit: &fit::Fit) -> Vec<(String, Problem, Severity)> {
    let mut out: Vec<_> = fit.verdicts.iter().map(|v| (v.path.clone(), v.problem, v.severity)).collect();
    out.sort_by(|a, b| a.0.cmp(&b.0));
    out
}

#[test]
fn generated_types_fit_the_rows_they_came_from() {
    for file in ["deliveries.parquet", "deliveries.jsonl", "deliveries.arrow", "deliveries.csv"] {
        for (lang, reader) in READABLE {
            for time in [TimeChoice::Sql, TimeChoice::JavaTime] {
                let code = generated(&sample(file), lang, time);
                let definition = fit::definition::read(&code, reader, None).unwrap_or_else(|e| panic!("{file} {lang:?}: {e}\n{code}"));
                let outcome = fit_of(&sample(file), &definition);
                assert_eq!(verdict_list(&outcome), vec![], "{file} as {lang:?}:\n{}", fit::render(&outcome, false));
                assert!(outcome.fits());
                assert_eq!(outcome.rows, 3000);
            }
        }
    }
}

#[test]
fn the_later_drop_shows_exactly_the_drift_put_in() {
    for file in ["deliveries.parquet", "deliveries.jsonl"] {
        for (lang, reader) in READABLE {
            let code = generated(&sample(file), lang, TimeChoice::Sql);
            let definition = fit::definition::read(&code, reader, None).unwrap();
            let outcome = fit_of(&sample(&format!("later/{file}")), &definition);
            let later = common::full(&sample(&format!("later/{file}"))).unwrap();
            let expected = vec![
                ("co2_grams".to_string(), Problem::NotInDefinition, Severity::Note),
                ("courier.vehicle".to_string(), Problem::Empty, Severity::Fails),
                ("rating".to_string(), Problem::WrongType, Severity::Fails),
            ];
            assert_eq!(verdict_list(&outcome), expected, "{file} as {lang:?}:\n{}", fit::render(&outcome, false));
            assert!(!outcome.fits());
            // The counts are the later drop's own: vehicles empty where its
            // shape saw nulls or missing keys.
            let vehicle = later.shape.find("courier.vehicle").unwrap();
            let empty = outcome.verdicts.iter().find(|v| v.path == "courier.vehicle").unwrap();
            assert_eq!(empty.rows, vehicle.nulls() + vehicle.missing, "{file} {lang:?}");
            assert!(empty.rows > 100 && empty.rows < 200, "about a tenth of 1,500: {}", empty.rows);
            assert_eq!(empty.examples.len(), 5);
        }
    }
}
