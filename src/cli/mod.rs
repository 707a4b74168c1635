//! The command line: `plumbline [PATH]` opens the window; subcommands work
//! headless. Errors become one `error:` line on stderr and exit code 2.

mod tree;

use std::path::PathBuf;
use std::process::ExitCode;
use std::sync::atomic::AtomicBool;

use clap::{Parser, Subcommand};

use crate::report::{self, ReportOptions};
use crate::scan::{self, SampleOptions, ScanOptions};
use crate::source::{FormatChoice, OpenOptions};
use crate::types::{Lang, MixedChoice, Optionality, TimeChoice, TypeOptions};

#[derive(Debug, Parser)]
#[command(name = "plumbline", version, about = "Shape, quality and record types for data files you have never seen")]
pub struct Cli {
    #[command(subcommand)]
    pub command: Option<Command>,
    /// A file or directory to open in the window.
    pub path: Option<PathBuf>,
    /// Window: select this field (its path, e.g. `parcel.weight_kg`) once read.
    #[arg(long, value_name = "FIELD")]
    pub field: Option<String>,
    /// Window: a second source to compare the first with (shows Compare).
    #[arg(long, value_name = "PATH")]
    pub compare: Option<PathBuf>,
    /// Window: the area to show first.
    #[arg(long, value_enum, default_value = "field-sheet")]
    pub area: crate::gui::state::Area,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Print the field tree of a source and optionally write the JSON report.
    Profile(ProfileArgs),
    /// Write record types that fit every row read.
    Types(TypesArgs),
    /// Check an existing definition against every row: exit 0 when every
    /// row fits, 1 when some do not, 2 on an error.
    Fit(FitArgs),
    /// Compare two sources: schema changes and drifted fields. Exit 0, or
    /// 1 when a --fail-on condition holds, 2 on an error.
    Compare(CompareArgs),
    /// Write a plan that profiles the source where it lives, on a
    /// distributed engine: a Spark SQL script and the PySpark driver that
    /// runs it and writes a Plumbline report.
    Plan(PlanArgs),
}

#[derive(Debug, clap::Args)]
pub struct PlanArgs {
    /// The data as the engine will read it: a local path, or a URI
    /// (s3a://…, abfss://…, hdfs://…) together with --like.
    pub source: String,
    /// The engine to write the plan for.
    #[arg(long, value_enum, default_value = "spark-sql")]
    pub engine: crate::plan::Engine,
    /// A local file or directory with the same schema as the source (one
    /// part file, say), read for the fields when the source is not local.
    #[arg(long, value_name = "PATH")]
    pub like: Option<PathBuf>,
    /// Write the script to FILE and the driver beside it (FILE with .py);
    /// without it the script goes to standard output.
    #[arg(short, long, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Replace the output files if they exist.
    #[arg(long)]
    pub force: bool,
    /// Read the local data as this format instead of detecting it.
    #[arg(long, value_enum)]
    pub format: Option<FormatChoice>,
}

/// What makes `compare` exit 1.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum FailOn {
    /// Any field added, removed, moved, retyped, or newly (no longer) empty.
    Schema,
    /// Any field drifted (a major PSI shift, or the null rate moved).
    Drift,
}

#[derive(Debug, clap::Args)]
pub struct CompareArgs {
    /// The earlier source (a file or a directory of part files).
    pub old: PathBuf,
    /// The later source.
    pub new: PathBuf,
    /// Exit 1 when this holds (may be given twice).
    #[arg(long, value_enum)]
    pub fail_on: Vec<FailOn>,
    /// Write the later source's HTML report, with the drift, to this file.
    #[arg(long, value_name = "FILE")]
    pub html: Option<PathBuf>,
    #[command(flatten)]
    pub out: JsonOut,
}

/// Where the JSON form of a result goes, and whether values stay in it.
#[derive(Debug, clap::Args)]
pub struct JsonOut {
    /// Write the result as JSON to this file (written atomically).
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
    /// Replace the --json file if it exists.
    #[arg(long)]
    pub force: bool,
    /// Leave data values (examples, new and vanished values) out.
    #[arg(long)]
    pub no_examples: bool,
}

#[derive(Debug, clap::Args)]
pub struct FitArgs {
    /// The data: a file or directory of part files, as for `profile`.
    pub path: PathBuf,
    /// The definition: Scala case classes, Rust structs, a Spark DDL
    /// schema string or a JSON Schema.
    pub definition: PathBuf,
    /// The definition's language (by default from its file name ending:
    /// .scala, .rs, .ddl or .sql, .json).
    #[arg(long, value_enum)]
    pub lang: Option<crate::fit::DefinitionLang>,
    /// The record that stands for one row, when the file has several that
    /// no other uses.
    #[arg(long, value_name = "NAME")]
    pub root: Option<String>,
    /// Fields the data has and the definition lacks make rows fail to fit.
    #[arg(long)]
    pub deny_extra: bool,
    #[command(flatten)]
    pub out: JsonOut,
    /// Read the data as this format instead of detecting it.
    #[arg(long, value_enum)]
    pub format: Option<FormatChoice>,
}

#[derive(Debug, clap::Args)]
pub struct TypesArgs {
    /// A file or directory of part files, as for `profile`.
    pub path: PathBuf,
    /// The language to write.
    #[arg(long, value_enum)]
    pub lang: Lang,
    /// Name of the root type (one row); the file's name by default.
    #[arg(long, value_name = "NAME")]
    pub root: Option<String>,
    /// Which fields are optional: where nulls or missing keys were seen,
    /// where the declared schema allows nulls, or every field.
    #[arg(long, value_enum, default_value_t = Optionality::Observed)]
    pub optional: Optionality,
    /// Fields of several kinds: one type that accepts each, or a union.
    #[arg(long, value_enum, default_value_t = MixedChoice::Widest)]
    pub mixed: MixedChoice,
    /// Date and instant types where the language has a choice (Scala).
    #[arg(long, value_enum, default_value_t = TimeChoice::Sql)]
    pub time: TimeChoice,
    /// Write to this file (atomically) instead of standard output.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Replace the -o file if it exists.
    #[arg(long)]
    pub force: bool,
    /// Read the file as this format instead of detecting it.
    #[arg(long, value_enum)]
    pub format: Option<FormatChoice>,
    /// Derive the types from a sample of N rows (the header says so); as
    /// for `profile --sample`, a large file is sampled from pieces of it.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u64).range(1..=crate::sample::MAX_ROWS as u64))]
    pub sample: Option<u64>,
    /// Seed of the sample.
    #[arg(long, value_name = "S", requires = "sample", default_value_t = crate::sample::DEFAULT_SEED)]
    pub seed: u64,
    /// Draw the sample from every row, reading the whole source.
    #[arg(long, requires = "sample")]
    pub sample_from_all: bool,
    /// Derive the types from the first rows only (the header says so).
    #[arg(long, conflicts_with = "sample")]
    pub first_look: bool,
}

#[derive(Debug, clap::Args)]
pub struct ProfileArgs {
    /// A file (Parquet, Arrow IPC, JSON, JSON Lines, CSV, TSV; gzip or zstd
    /// for the text formats) or a directory of part files.
    pub path: PathBuf,
    /// Write the JSON report to this file (written atomically).
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
    /// Write a self-contained HTML report to this file (written atomically).
    #[arg(long, value_name = "FILE")]
    pub html: Option<PathBuf>,
    /// Replace the --json or --html file if it exists.
    #[arg(long)]
    pub force: bool,
    /// Read only the schema and metadata (the first rows for JSON and CSV).
    #[arg(long)]
    pub shape_only: bool,
    /// Read the file as this format instead of detecting it; a file not in
    /// that format is an error, never a guess.
    #[arg(long, value_enum)]
    pub format: Option<FormatChoice>,
    /// Leave data values (examples) out of the report and the output.
    #[arg(long)]
    pub no_examples: bool,
    /// Profile a sample of N rows; rows outside it are not checked. A
    /// large Parquet or uncompressed JSON Lines file, or a directory, is
    /// sampled from pieces picked at random, reading about 4×N rows in
    /// all; anything else is read whole and sampled uniformly.
    #[arg(long, value_name = "N", conflicts_with = "shape_only", value_parser = clap::value_parser!(u64).range(1..=crate::sample::MAX_ROWS as u64))]
    pub sample: Option<u64>,
    /// Seed of the sample, so a rerun draws the same rows.
    #[arg(long, value_name = "S", requires = "sample", default_value_t = crate::sample::DEFAULT_SEED)]
    pub seed: u64,
    /// Draw the sample from every row, reading the whole source (uniform
    /// over all rows, but as slow as profiling every row).
    #[arg(long, requires = "sample")]
    pub sample_from_all: bool,
    /// Profile only the first rows (at most 10,000; fewer for wide
    /// files): the footer and the start of the first row group, or the
    /// first lines. Answers within a second on any size; says it is partial.
    #[arg(long, conflicts_with_all = ["shape_only", "sample"])]
    pub first_look: bool,
}

pub fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Some(Command::Profile(args)) => run_profile(&args),
        Some(Command::Types(args)) => run_types(&args),
        Some(Command::Fit(args)) => run_fit(&args),
        Some(Command::Compare(args)) => run_compare(&args),
        Some(Command::Plan(args)) => run_plan(&args),
        None => match crate::gui::run(crate::gui::Start {
            path: cli.path,
            field: cli.field,
            area: cli.area,
            compare: cli.compare,
        }) {
            Ok(()) => ExitCode::SUCCESS,
            Err(e) => fail(&e),
        },
    }
}

fn fail(message: &dyn std::fmt::Display) -> ExitCode {
    eprintln!("error: {message}");
    ExitCode::from(2)
}

fn run_profile(args: &ProfileArgs) -> ExitCode {
    let open = OpenOptions { format: args.format };
    let sample = args.sample.map(|rows| SampleOptions {
        rows: rows.min(usize::MAX as u64) as usize,
        seed: args.seed,
        every_row: args.sample_from_all,
    });
    let options =
        ScanOptions { shape_only: args.shape_only, sample, first_look: args.first_look, ..Default::default() };
    let stop = AtomicBool::new(false);
    // Drawn only when stderr is a terminal (indicatif checks).
    let bar = indicatif::ProgressBar::with_draw_target(None, indicatif::ProgressDrawTarget::stderr());
    if let Ok(style) =
        indicatif::ProgressStyle::with_template("reading {percent:>3}% [{bar:32}] {elapsed} (about {eta} left)")
    {
        bar.set_style(style.progress_chars("=> "));
    }
    let mut show_progress = |p: crate::source::Progress| {
        if p.total > 0 {
            bar.set_length(p.total);
            bar.set_position(p.done.min(p.total));
        }
    };
    let scanned = scan::scan_path(&args.path, open, options, &stop, &mut show_progress);
    bar.finish_and_clear();
    let scan = match scanned {
        Ok(s) => s,
        Err(e) => return fail(&e),
    };
    let report_options = ReportOptions { no_examples: args.no_examples };
    print!("{}", tree::render(&scan, report_options));
    if args.json.is_some() || args.html.is_some() {
        let report = report::build(&scan, report_options);
        let outputs = [(&args.json, report::to_json(&report)), (&args.html, report::html::render(&report, None))];
        for (path, text) in outputs {
            if let Some(path) = path
                && let Err(e) = report::write::write_atomically(path, text.as_bytes(), args.force)
            {
                return fail(&e);
            }
        }
    }
    match &scan.coverage {
        scan::Coverage::Broken { error, .. } => fail(error),
        _ => ExitCode::SUCCESS,
    }
}

fn run_types(args: &TypesArgs) -> ExitCode {
    let open = OpenOptions { format: args.format };
    let sample =
        args.sample.map(|rows| SampleOptions { rows: rows as usize, seed: args.seed, every_row: args.sample_from_all });
    let options = ScanOptions { sample, skip_statistics: true, first_look: args.first_look, ..Default::default() };
    let stop = AtomicBool::new(false);
    let scan = match scan::scan_path(&args.path, open, options, &stop, &mut |_| {}) {
        Ok(s) => s,
        Err(e) => return fail(&e),
    };
    if let scan::Coverage::Broken { error, .. } = &scan.coverage {
        // Types from part of a file would be a silent partial result.
        return fail(error);
    }
    let type_options = TypeOptions {
        root: args.root.clone().unwrap_or_else(|| crate::types::default_root(&scan)),
        optional: args.optional,
        mixed: args.mixed,
        time: args.time,
    };
    let generated = crate::types::generate(&scan, args.lang, &type_options);
    for warning in &generated.warnings {
        eprintln!("warning: {warning}");
    }
    match &args.output {
        Some(path) => match report::write::write_atomically(path, generated.code.as_bytes(), args.force) {
            Ok(()) => ExitCode::SUCCESS,
            Err(e) => fail(&e),
        },
        None => {
            print!("{}", generated.code);
            ExitCode::SUCCESS
        }
    }
}

fn run_plan(args: &PlanArgs) -> ExitCode {
    let local = match &args.like {
        Some(path) => path.clone(),
        None if std::path::Path::new(&args.source).exists() => PathBuf::from(&args.source),
        None => {
            return fail(&format!(
                "{} is not a local path: pass --like with a local file or part that has the same schema",
                args.source
            ));
        }
    };
    let open = OpenOptions { format: args.format };
    let stop = AtomicBool::new(false);
    // A declared schema is enough; schema-less formats are read in full
    // for their kinds (no statistics).
    let mut options = ScanOptions { shape_only: true, ..Default::default() };
    let mut scanned = scan::scan_path(&local, open, options, &stop, &mut |_| {});
    if let Ok(s) = &scanned
        && s.coverage != scan::Coverage::SchemaOnly
    {
        options = ScanOptions { skip_statistics: true, ..Default::default() };
        scanned = scan::scan_path(&local, open, options, &stop, &mut |_| {});
    }
    let scan = match scanned {
        Ok(s) => s,
        Err(e) => return fail(&e),
    };
    if let scan::Coverage::Broken { error, .. } = &scan.coverage {
        return fail(error);
    }
    // A local source is named absolutely: the driver may run elsewhere.
    let source = match std::fs::canonicalize(&args.source) {
        Ok(absolute) if args.like.is_none() => absolute.display().to_string(),
        _ => args.source.clone(),
    };
    let plan = match crate::plan::build(&scan, &source) {
        Ok(p) => p,
        Err(e) => return fail(&format!("{}: {e}", local.display())),
    };
    let script = crate::plan::spark_sql::render(&plan, &crate::time::now_rfc3339());
    let Some(output) = &args.output else {
        print!("{script}");
        eprintln!("note: the PySpark driver is written beside the script with -o FILE");
        return ExitCode::SUCCESS;
    };
    let driver_path = output.with_extension("py");
    if driver_path == *output {
        return fail(&format!(
            "{}: the script needs a name not ending in .py (the driver takes that)",
            output.display()
        ));
    }
    for (path, text) in [(output, script), (&driver_path, crate::plan::driver(&plan))] {
        if let Err(e) = report::write::write_atomically(path, text.as_bytes(), args.force) {
            return fail(&e);
        }
    }
    eprintln!(
        "wrote {} and {}; run: spark-submit {} --report REPORT.json",
        output.display(),
        driver_path.display(),
        driver_path.display()
    );
    ExitCode::SUCCESS
}

fn run_fit(args: &FitArgs) -> ExitCode {
    use crate::fit::{self, DefinitionLang, FitOptions};
    let Some(lang) = args.lang.or_else(|| DefinitionLang::from_path(&args.definition)) else {
        return fail(&format!(
            "{}: cannot tell the definition's language from its name; give --lang",
            args.definition.display()
        ));
    };
    let text = match std::fs::read_to_string(&args.definition) {
        Ok(t) => t,
        Err(e) => return fail(&format!("{}: {e}", args.definition.display())),
    };
    let definition = match fit::definition::read(&text, lang, args.root.as_deref()) {
        Ok(d) => d,
        Err(e) => return fail(&format!("{}: {e}", args.definition.display())),
    };
    let open = OpenOptions { format: args.format };
    let stop = AtomicBool::new(false);
    let options = ScanOptions { skip_statistics: true, ..Default::default() };
    let scan = match scan::scan_path(&args.path, open, options, &stop, &mut |_| {}) {
        Ok(s) => s,
        Err(e) => return fail(&e),
    };
    if let scan::Coverage::Broken { error, .. } = &scan.coverage {
        // A fit must see every row: a source that breaks part-way is an error.
        return fail(error);
    }
    let outcome = match fit::fit(&scan, open, &definition, FitOptions { deny_extra: args.deny_extra }, &stop) {
        Ok(f) => f,
        Err(e) => return fail(&e),
    };
    print!("{}", fit::render(&outcome, args.out.no_examples));
    if let Some(json) = &args.out.json {
        let report = fit_json(args, lang, &outcome);
        if let Err(e) = report::write::write_atomically(json, report.as_bytes(), args.out.force) {
            return fail(&e);
        }
    }
    if outcome.fits() { ExitCode::SUCCESS } else { ExitCode::from(1) }
}

/// The fit as JSON: what was checked against what, and every verdict.
fn fit_json(args: &FitArgs, lang: crate::fit::DefinitionLang, outcome: &crate::fit::Fit) -> String {
    let mut verdicts = serde_json::to_value(&outcome.verdicts).unwrap_or_default();
    if args.out.no_examples
        && let Some(list) = verdicts.as_array_mut()
    {
        for v in list {
            if let Some(examples) = v.get_mut("examples").and_then(|e| e.as_array_mut()) {
                for e in examples {
                    e.as_object_mut().map(|o| o.remove("value"));
                }
            }
        }
    }
    let out = serde_json::json!({
        "source": args.path.display().to_string(),
        "definition": args.definition.display().to_string(),
        "lang": lang.label(),
        "rows": outcome.rows,
        "fits": outcome.fits(),
        "partial": outcome.partial,
        "verdicts": verdicts,
    });
    serde_json::to_string_pretty(&out).unwrap_or_default() + "\n"
}

fn run_compare(args: &CompareArgs) -> ExitCode {
    let stop = AtomicBool::new(false);
    let mut scans = Vec::new();
    for path in [&args.old, &args.new] {
        match scan::scan_path(path, OpenOptions::default(), ScanOptions::default(), &stop, &mut |_| {}) {
            Ok(s) => {
                if let scan::Coverage::Broken { error, .. } = &s.coverage {
                    return fail(error);
                }
                scans.push(s);
            }
            Err(e) => return fail(&e),
        }
    }
    let compared = crate::compare::compare(&scans[0].shape, &scans[1].shape);
    print!("{}", crate::compare::text::render(&compared, args.out.no_examples));
    if let Some(json) = &args.out.json {
        let mut drifts = serde_json::to_value(&compared.drifts).unwrap_or_default();
        if args.out.no_examples
            && let Some(list) = drifts.as_array_mut()
        {
            for d in list.iter_mut().filter_map(|d| d.get_mut("categories")).filter_map(|c| c.as_object_mut()) {
                d.remove("new_values");
                d.remove("vanished_values");
            }
        }
        let changes: Vec<serde_json::Value> = compared
            .changes
            .iter()
            .filter(|c| c.change != crate::compare::Change::Same)
            .map(|c| {
                let other = match &c.change {
                    crate::compare::Change::MovedTo(p) | crate::compare::Change::MovedFrom(p) => Some(p.clone()),
                    _ => None,
                };
                serde_json::json!({
                    "path": c.path,
                    "change": c.change.label(),
                    "other_path": other,
                    "before": c.before.as_ref().map(|b| b.type_label.clone()),
                    "after": c.after.as_ref().map(|a| a.type_label.clone()),
                })
            })
            .collect();
        let out = serde_json::json!({
            "old": args.old.display().to_string(),
            "new": args.new.display().to_string(),
            "schema_changed": compared.schema_changed(),
            "drifted": compared.drifted(),
            "changes": changes,
            "drift": drifts,
        });
        let text = serde_json::to_string_pretty(&out).unwrap_or_default() + "\n";
        if let Err(e) = report::write::write_atomically(json, text.as_bytes(), args.out.force) {
            return fail(&e);
        }
    }
    if let Some(html) = &args.html {
        let report = report::build(&scans[1], ReportOptions { no_examples: args.out.no_examples });
        let page = report::html::render(&report, Some(&compared));
        if let Err(e) = report::write::write_atomically(html, page.as_bytes(), args.out.force) {
            return fail(&e);
        }
    }
    let failed = args.fail_on.iter().any(|f| match f {
        FailOn::Schema => compared.schema_changed(),
        FailOn::Drift => compared.drifted(),
    });
    if failed { ExitCode::from(1) } else { ExitCode::SUCCESS }
}
