//! Proof of the Scala and Spark DDL targets with the Scala compiler
//! (Debian `scala`, installed by `.ci/run`): scalac compiles the generated
//! case classes, and Scala's own reflection of them (tests/types/scala/
//! Describe.scala) spells the same field names, types, nesting and
//! nullability as the Spark DDL generated for the same shape.

mod common;
#[path = "types/nasty.rs"]
mod nasty;

use std::path::{Path, PathBuf};
use std::process::Command;

/// The folder of the Scala jars beside the `scala` launcher (Debian:
/// /usr/share/scala-2.11/lib, reached through /usr/bin/scala's link).
fn scala_lib(scala: &Path) -> PathBuf {
    let launcher = std::fs::canonicalize(scala).unwrap();
    launcher.parent().and_then(Path::parent).unwrap().join("lib")
}

fn types(input: &Path, lang: &str, extra: &[&str]) -> String {
    let mut args = vec!["types", input.to_str().unwrap(), "--lang", lang, "--root", "Row"];
    args.extend(extra);
    let o = Command::new(env!("CARGO_BIN_EXE_plumbline")).args(&args).output().unwrap();
    assert!(o.status.success(), "{args:?}: {}", String::from_utf8_lossy(&o.stderr));
    String::from_utf8(o.stdout).unwrap()
}

fn sample(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name)
}

/// The DDL without its header comments, column comments and decimal
/// precision (which a case class does not carry).
fn comparable(ddl: &str) -> String {
    let body: Vec<&str> = ddl.lines().filter(|l| !l.starts_with("--")).collect();
    let mut text = body.join("\n");
    while let Some(at) = text.find(" COMMENT '") {
        let end = text[at + 10..].find('\'').map(|e| at + 10 + e + 1).unwrap();
        text.replace_range(at..end, "");
    }
    let mut out = String::new();
    let mut rest = text.as_str();
    while let Some(at) = rest.find("DECIMAL(") {
        out.push_str(&rest[..at + 7]);
        rest = &rest[at + rest[at..].find(')').unwrap() + 1..];
    }
    out.push_str(rest);
    out
}

#[test]
fn scalac_compiles_the_case_classes_and_they_match_the_spark_ddl() {
    let installed_by = "`.ci/run` installs Debian's scala";
    let (Some(scalac), Some(scala)) = (common::tool_on_path("scalac", installed_by), common::tool_on_path("scala", installed_by)) else {
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let nasty_rows = dir.path().join("nasty.jsonl");
    std::fs::write(&nasty_rows, nasty::nasty_jsonl(20)).unwrap();
    let (jsonl, parquet) = (sample("deliveries.jsonl"), sample("deliveries.parquet"));
    // (input, options, compare with the DDL?) — the nasty shape's case class
    // is cut at the JVM's parameter limit, so only its compiling is checked.
    let cases: [(&Path, &[&str], bool); 5] = [
        (&jsonl, &[], true),
        (&parquet, &[], true),
        (&parquet, &["--time", "java-time"], true),
        (&parquet, &["--optional", "declared"], true),
        (&nasty_rows, &[], false),
    ];
    let mut sources = vec![Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/types/scala/Describe.scala")];
    let mut main = String::from("import scala.reflect.runtime.universe._\nobject Main {\n  def main(args: Array[String]): Unit = {\n");
    for (i, (input, extra, compare)) in cases.iter().enumerate() {
        let file = dir.path().join(format!("case{i}.scala"));
        std::fs::write(&file, format!("object case{i} {{\n{}\n}}\n", types(input, "scala", extra))).unwrap();
        sources.push(file);
        if *compare {
            main.push_str(&format!("    println(\"== case{i}\")\n    println(Describe.columns(typeOf[case{i}.Row]))\n"));
        }
    }
    main.push_str("  }\n}\n");
    let main_file = dir.path().join("Main.scala");
    std::fs::write(&main_file, main).unwrap();
    sources.push(main_file);
    let classes = dir.path().join("classes");
    std::fs::create_dir_all(&classes).unwrap();
    // Wide case classes make deep trees (equals, hashCode): give scalac a larger stack.
    let o = Command::new(scalac).arg("-J-Xss64m").arg("-d").arg(&classes).args(&sources).output().unwrap();
    assert!(o.status.success(), "scalac refuses the generated case classes:\n{}", String::from_utf8_lossy(&o.stderr));
    // Run on `java` with the Scala jars: the `scala` runner's class loader
    // does not see the JVM's java.sql module on Java 9 and later.
    let lib = scala_lib(&scala);
    let classpath = [classes.clone(), lib.join("scala-library.jar"), lib.join("scala-reflect.jar")];
    let classpath = std::env::join_paths(classpath).unwrap();
    let o = Command::new("java").arg("-cp").arg(classpath).arg("Main").output().unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let described = String::from_utf8(o.stdout).unwrap();
    for (i, (input, extra, compare)) in cases.iter().enumerate() {
        if !compare {
            continue;
        }
        let from_scala = described.split(&format!("== case{i}\n")).nth(1).unwrap().split("\n== ").next().unwrap().trim();
        let ddl = comparable(&types(input, "spark-ddl", extra));
        assert_eq!(from_scala, ddl.trim(), "{} {extra:?}: case classes and DDL differ", input.display());
    }
}
