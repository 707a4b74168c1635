//! Fisher's iris data (an open dataset; the copy shipped inside the
//! `vega_datasets` package on PyPI, installed by `.ci/run` without its
//! dependencies), read through Plumbline's own JSON source, against the
//! summary table of the UCI Machine Learning Repository's `iris.names`
//! (min, max, mean and standard deviation to two decimals; the table is
//! quoted from memory, and its last digit is allowed ±0.01 because UCI's copy
//! differs from Fisher's in two values).

use std::path::PathBuf;
use std::process::Command;
use std::sync::atomic::AtomicBool;

use plumbline::profile::moments::Moments;
use plumbline::source::{Batch, OpenOptions};
use plumbline::value::Value;

fn iris_file() -> Option<PathBuf> {
    let find = "import importlib.util, os; s = importlib.util.find_spec('vega_datasets'); \
                print(os.path.join(os.path.dirname(s.origin), '_data', 'iris.json'))";
    let out = Command::new("python3").args(["-c", find]).output().ok().filter(|o| o.status.success());
    let path = out.map(|o| PathBuf::from(String::from_utf8_lossy(&o.stdout).trim()));
    match path.filter(|p| p.exists()) {
        Some(p) => Some(p),
        None => {
            let message = "REFERENCE CHECK NOT RUN: the iris data needs `pip install --no-deps vega_datasets`";
            if std::env::var("CI").is_ok_and(|v| v == "true") {
                panic!("{message}");
            }
            eprintln!("\n*** {message} ***\n");
            None
        }
    }
}

#[test]
fn iris_summary_statistics_match_the_uci_table() {
    let Some(path) = iris_file() else { return };
    let mut source = plumbline::source::open(&path, OpenOptions::default()).unwrap();
    let columns = ["sepalLength", "sepalWidth", "petalLength", "petalWidth"];
    let mut moments = [Moments::default(); 4];
    while let Some(batch) = source.next_batch().unwrap() {
        let rows = match batch {
            Batch::Json(raw) => {
                let (rows, error) = raw.rows();
                assert!(error.is_none(), "{error:?}");
                rows
            }
            Batch::Rows(rows) => rows,
            Batch::Arrow(_) => unreachable!("JSON"),
        };
        for row in rows {
            let Value::Object(members) = row else { panic!("rows are objects") };
            for (i, name) in columns.iter().enumerate() {
                match members.iter().find(|(k, _)| k == name).map(|(_, v)| v) {
                    Some(Value::Float(f)) => moments[i].add(*f),
                    Some(Value::Int(n)) => moments[i].add(*n as f64),
                    other => panic!("{name}: {other:?}"),
                }
            }
        }
    }
    // UCI iris.names, "Summary Statistics": min, max, mean, SD.
    let table = [(4.3, 7.9, 5.84, 0.83), (2.0, 4.4, 3.05, 0.43), (1.0, 6.9, 3.76, 1.76), (0.1, 2.5, 1.20, 0.76)];
    for ((name, m), (min, max, mean, sd)) in columns.iter().zip(&moments).zip(table) {
        assert_eq!(m.count(), 150, "{name}");
        assert_eq!((m.min().unwrap(), m.max().unwrap()), (min, max), "{name}");
        assert!((m.mean().unwrap() - mean).abs() <= 0.01, "{name}: mean {:?}", m.mean());
        assert!((m.std().unwrap() - sd).abs() <= 0.01, "{name}: sd {:?}", m.std());
    }
    // And the whole file is seen as one source of 150 rows with five fields.
    let stop = AtomicBool::new(false);
    let scan = plumbline::scan::scan_path(&path, OpenOptions::default(), Default::default(), &stop, &mut |_| {}).unwrap();
    assert_eq!((scan.shape.rows, scan.shape.fields.len()), (150, 5));
}
