//! Database sources against a real PostgreSQL server (not a mock).
//!
//! The test starts a throwaway cluster itself when PostgreSQL's server
//! binaries are found (`/usr/lib/postgresql/*/bin`, or the folder named by
//! `CRESCENDO_PG_BIN`): data folder `target/pgtest`, listening on
//! 127.0.0.1 on a free port, password authentication (scram-sha-256). As
//! root, the server runs as the `postgres` system user (initdb refuses
//! root). A cluster left over by an earlier, interrupted run is stopped and
//! removed first; this run's cluster is stopped when the test ends.
//! Without the binaries the test prints `skipped: <reason>` and passes,
//! unless `CRESCENDO_REQUIRE_DB=1` (set by `.ci/run`), where it fails.
//!
//! Everything runs in one test function, one part after another, so that
//! the one cluster is started and stopped once.
//!
//! Outside check: PostgreSQL's own aggregates (`sum` over `numeric`,
//! `count`, `min`, `percentile_disc`, PostgreSQL 15) are the reference the
//! local engine is compared with: every demo story's deck built from its
//! CSV files by the local engine must be byte-identical to the deck built
//! from the same files loaded into PostgreSQL with COPY.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use std::sync::Arc;
use std::time::{Duration, Instant};

use common::{read_dir_files, root, stories};

const PASSWORD: &str = "Tr0ub4dor-and-3";

struct Cluster {
    bin: PathBuf,
    data: PathBuf,
    port: u16,
    as_postgres: bool,
    /// The certificate of the test CA that signed the server's certificate
    /// (the server speaks TLS; `tls_reader` may connect only over it).
    ca: PathBuf,
}

impl Cluster {
    fn conn(&self) -> String {
        format!(
            "host=127.0.0.1 port={} user=postgres password={PASSWORD} dbname=postgres",
            self.port
        )
    }

    fn client(&self) -> postgres::Client {
        postgres::Client::connect(&self.conn(), postgres::NoTls)
            .expect("connect to the test cluster")
    }

    fn pg_ctl(&self, args: &[&str]) -> Output {
        pg_command(&self.bin.join("pg_ctl"), self.as_postgres, args)
    }
}

impl Drop for Cluster {
    fn drop(&mut self) {
        let d = self.data.join("data");
        let _ = self.pg_ctl(&["-D", d.to_str().unwrap_or(""), "-m", "fast", "-w", "stop"]);
    }
}

fn pg_command(program: &Path, as_postgres: bool, args: &[&str]) -> Output {
    let mut c = if as_postgres {
        let mut c = Command::new("runuser");
        c.args(["-u", "postgres", "--"]).arg(program);
        c
    } else {
        Command::new(program)
    };
    c.args(args).output().expect("run a PostgreSQL program")
}

/// The folder with initdb and pg_ctl, or why there is none.
fn find_bin() -> Result<PathBuf, String> {
    if let Some(b) = std::env::var_os("CRESCENDO_PG_BIN") {
        return Ok(PathBuf::from(b));
    }
    let mut found: Vec<(u32, PathBuf)> = std::fs::read_dir("/usr/lib/postgresql")
        .map_err(|_| "no PostgreSQL server binaries (/usr/lib/postgresql is missing; install Debian's `postgresql` package)".to_string())?
        .filter_map(|e| {
            let p = e.ok()?.path();
            let v: u32 = p.file_name()?.to_str()?.parse().ok()?;
            let bin = p.join("bin");
            (bin.join("initdb").exists() && bin.join("pg_ctl").exists()).then_some((v, bin))
        })
        .collect();
    found.sort();
    found
        .pop()
        .map(|(_, b)| b)
        .ok_or_else(|| "no initdb/pg_ctl under /usr/lib/postgresql/*/bin".to_string())
}

fn free_port() -> u16 {
    std::net::TcpListener::bind("127.0.0.1:0")
        .and_then(|l| l.local_addr())
        .map(|a| a.port())
        .expect("a free port")
}

fn start() -> Result<Cluster, String> {
    start_in("pgtest")
}

/// A throwaway cluster in `target/<folder>` (or the temporary folder).
fn start_in(folder: &str) -> Result<Cluster, String> {
    let bin = find_bin()?;
    let uid = Command::new("id")
        .arg("-u")
        .output()
        .map_err(|e| e.to_string())?;
    let as_postgres = String::from_utf8_lossy(&uid.stdout).trim() == "0";
    let mut base = root().join("target").join(folder);
    if as_postgres {
        // The postgres user must reach the folder; a checkout under a
        // private home folder (say /root) is out of its reach, so the
        // cluster then lives in the temporary folder instead.
        let _ = std::fs::create_dir_all(&base);
        let reach = Command::new("runuser")
            .args(["-u", "postgres", "--", "test", "-x"])
            .arg(&base)
            .status()
            .map_err(|e| format!("runuser: {e}"))?;
        if !reach.success() {
            base = std::env::temp_dir().join(format!("crescendo-{folder}"));
            println!(
                "note: the postgres user cannot reach target/; the cluster lives in {}",
                base.display()
            );
        }
    }
    let data = base.join("data");
    // A cluster left by an interrupted run: stop it, start afresh.
    if data.join("postmaster.pid").exists() {
        let _ = pg_command(
            &bin.join("pg_ctl"),
            as_postgres,
            &[
                "-D",
                data.to_str().unwrap_or(""),
                "-m",
                "immediate",
                "-w",
                "stop",
            ],
        );
    }
    let _ = std::fs::remove_dir_all(&base);
    std::fs::create_dir_all(&base).map_err(|e| e.to_string())?;
    let pwfile = base.join("pw");
    std::fs::write(&pwfile, PASSWORD).map_err(|e| e.to_string())?;
    if as_postgres {
        let s = Command::new("chown")
            .args(["-R", "postgres:postgres"])
            .arg(&base)
            .status()
            .map_err(|e| e.to_string())?;
        if !s.success() {
            return Err("cannot hand target/pgtest to the postgres user".into());
        }
    }
    let out = pg_command(
        &bin.join("initdb"),
        as_postgres,
        &[
            "-D",
            data.to_str().unwrap_or(""),
            "-U",
            "postgres",
            "--auth=scram-sha-256",
            "--pwfile",
            pwfile.to_str().unwrap_or(""),
            "-E",
            "UTF8",
            "--locale=C",
            "--no-sync",
        ],
    );
    if !out.status.success() {
        return Err(format!(
            "initdb failed: {}",
            String::from_utf8_lossy(&out.stderr)
        ));
    }
    let ca = serve_tls(&base, &data, as_postgres)?;
    let port = free_port();
    let cluster = Cluster {
        bin,
        data: base.clone(),
        port,
        as_postgres,
        ca,
    };
    let opts = format!(
        "-p {port} -k {} -c listen_addresses=127.0.0.1 -c fsync=off -c synchronous_commit=off -c full_page_writes=off \
         -c ssl=on -c ssl_cert_file=server.crt -c ssl_key_file=server.key",
        data.display()
    );
    let log = base.join("log");
    let out = cluster.pg_ctl(&[
        "-D",
        data.to_str().unwrap_or(""),
        "-o",
        &opts,
        "-l",
        log.to_str().unwrap_or(""),
        "-w",
        "start",
    ]);
    if !out.status.success() {
        return Err(format!(
            "pg_ctl start failed: {}{}",
            String::from_utf8_lossy(&out.stderr),
            std::fs::read_to_string(&log).unwrap_or_default()
        ));
    }
    Ok(cluster)
}

/// Give the cluster a certificate for 127.0.0.1 signed by a test CA made
/// here (rcgen), and let the role `tls_reader` in only over TLS (pg_hba:
/// `hostnossl … reject` before `hostssl`). Returns the CA certificate's
/// path, for `SSL_CERT_FILE`.
fn serve_tls(base: &Path, data: &Path, as_postgres: bool) -> Result<PathBuf, String> {
    let err = |e: rcgen::Error| format!("test certificates: {e}");
    let mut ca_params = rcgen::CertificateParams::new(Vec::<String>::new()).map_err(err)?;
    ca_params.is_ca = rcgen::IsCa::Ca(rcgen::BasicConstraints::Unconstrained);
    ca_params
        .distinguished_name
        .push(rcgen::DnType::CommonName, "crescendo test CA");
    let ca_key = rcgen::KeyPair::generate().map_err(err)?;
    let ca_cert = ca_params.self_signed(&ca_key).map_err(err)?;
    let issuer = rcgen::Issuer::new(ca_params, ca_key);
    let params = rcgen::CertificateParams::new(vec!["127.0.0.1".to_string()]).map_err(err)?;
    let key = rcgen::KeyPair::generate().map_err(err)?;
    let cert = params.signed_by(&key, &issuer).map_err(err)?;
    let io = |e: std::io::Error| e.to_string();
    std::fs::write(data.join("server.crt"), cert.pem()).map_err(io)?;
    std::fs::write(data.join("server.key"), key.serialize_pem()).map_err(io)?;
    let ca = base.join("ca.crt");
    std::fs::write(&ca, ca_cert.pem()).map_err(io)?;
    {
        use std::os::unix::fs::PermissionsExt;
        std::fs::set_permissions(
            data.join("server.key"),
            std::fs::Permissions::from_mode(0o600),
        )
        .map_err(io)?;
    }
    let hba = data.join("pg_hba.conf");
    let rest = std::fs::read_to_string(&hba).map_err(io)?;
    std::fs::write(
        &hba,
        format!(
            "hostnossl all tls_reader 127.0.0.1/32 reject\n\
             hostssl all tls_reader 127.0.0.1/32 scram-sha-256\n{rest}"
        ),
    )
    .map_err(io)?;
    if as_postgres {
        let s = Command::new("chown")
            .arg("postgres:postgres")
            .arg(data.join("server.crt"))
            .arg(data.join("server.key"))
            .status()
            .map_err(io)?;
        if !s.success() {
            return Err("cannot hand the server's key to the postgres user".into());
        }
    }
    Ok(ca)
}

/// Run crescendo with `env` set.
fn run(dir: &Path, args: &[&str], env: &[(&str, &str)]) -> Output {
    let mut c = Command::new(env!("CARGO_BIN_EXE_crescendo"));
    c.args(args).current_dir(dir).env("NO_COLOR", "1");
    for (k, v) in env {
        c.env(k, v);
    }
    c.output().expect("run crescendo")
}

fn text(o: &Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    )
}

#[test]
fn database_sources_against_a_real_server() {
    let cluster = match start() {
        Ok(c) => c,
        Err(why) => {
            if std::env::var("CRESCENDO_REQUIRE_DB").as_deref() == Ok("1") {
                panic!("CRESCENDO_REQUIRE_DB=1 but the test cluster could not start: {why}");
            }
            println!("skipped: {why}");
            return;
        }
    };
    let cluster = Arc::new(cluster);
    equivalence(&cluster);
    hostile_names(&cluster);
    faults(&cluster);
    unmatched_texts(&cluster);
    float_sums(&cluster);
    scale(&cluster);
}

/// Create `table` from a CSV file (types from the local loader) with an
/// identity column `line` in file order, and COPY the file into it.
fn load_csv(
    client: &mut postgres::Client,
    table: &str,
    csv: &Path,
    declared: &[(String, crescendo_data::ColType)],
) {
    use crescendo_data::ColType;
    let spec = crescendo_data::CsvSpec {
        path: csv.to_path_buf(),
        display_name: csv.display().to_string(),
        declared: declared.to_vec(),
        missing: vec![String::new(), "NA".to_string()],
        numbers: Default::default(),
    };
    let t = crescendo_data::load_csv(&spec).expect("the demo CSV loads");
    let q = |s: &str| format!("\"{}\"", s.replace('"', "\"\""));
    let cols: Vec<String> = t
        .columns
        .iter()
        .map(|c| {
            let ty = match c.ty {
                ColType::Text => "text",
                ColType::Number => "numeric",
                ColType::Date => "date",
                ColType::Year => "integer",
                ColType::Month => {
                    assert!(
                        declared.iter().any(|(n, _)| *n == c.name),
                        "{}: an undeclared month column has no database form here",
                        c.name
                    );
                    "text"
                }
            };
            format!("{} {ty}", q(&c.name))
        })
        .collect();
    client
        .batch_execute(&format!(
            "DROP TABLE IF EXISTS {t}; CREATE TABLE {t} (line bigint GENERATED ALWAYS AS IDENTITY, {})",
            cols.join(", "),
            t = q(table)
        ))
        .expect("create table");
    let names: Vec<String> = t.columns.iter().map(|c| q(&c.name)).collect();
    let mut w = client
        .copy_in(&format!(
            "COPY {} ({}) FROM STDIN (FORMAT csv, HEADER true)",
            q(table),
            names.join(", ")
        ))
        .expect("copy in");
    use std::io::Write;
    w.write_all(&std::fs::read(csv).expect("read csv"))
        .expect("copy");
    w.finish().expect("copy finished");
}

/// Every demo story from its CSV files and from the same data in
/// PostgreSQL gives a byte-identical deck.
fn equivalence(cluster: &Cluster) {
    let mut client = cluster.client();
    let conn = cluster.conn();
    let work = root().join("target").join("pgeq");
    let _ = std::fs::remove_dir_all(&work);
    std::fs::create_dir_all(work.join("stories")).expect("work folder");
    // The demo stories load plugins from `../../target/debug`.
    #[cfg(unix)]
    std::os::unix::fs::symlink(root().join("target"), work.join("target")).expect("symlink");
    let mut pushed = 0;
    let mut pushed_by = Vec::new();
    for (name, path) in stories() {
        let dir = path.parent().expect("story folder");
        let copy = work.join("stories").join(dir.file_name().expect("name"));
        copy_dir(dir, &copy);
        let text = std::fs::read_to_string(&path).expect("story");
        let src = crescendo_diag::Source::file(path.display().to_string(), text.clone());
        let (ast, diags) = crescendo_lang::parse(&src);
        assert!(diags.is_empty(), "{name}: {diags:?}");
        let mut edits = Vec::new();
        for item in &ast.items {
            let crescendo_lang::ast::Item::Data(d) = item else {
                continue;
            };
            let declared: Vec<(String, crescendo_data::ColType)> = d
                .columns
                .iter()
                .map(|c| {
                    let ty = match c.ty.name.as_str() {
                        "number" => crescendo_data::ColType::Number,
                        "date" => crescendo_data::ColType::Date,
                        "month" => crescendo_data::ColType::Month,
                        "year" => crescendo_data::ColType::Year,
                        _ => crescendo_data::ColType::Text,
                    };
                    (c.name.name.clone(), ty)
                })
                .collect();
            let table = format!("{name}_{}", d.name.name);
            load_csv(&mut client, &table, &dir.join(&d.file.value), &declared);
            edits.push((
                d.file.span.clone(),
                format!("table \"{table}\" via CRESCENDO_TEST_DB in order of line"),
            ));
        }
        let mut db_text = text.clone();
        for (span, with) in edits.into_iter().rev() {
            db_text.replace_range(span, &with);
        }
        let story_file = copy.join(path.file_name().expect("file"));
        std::fs::write(&story_file, &db_text).expect("write story copy");
        // the routes story loads plugins built into target/debug
        let plugins = common::ensure_plugins().to_str().expect("utf-8 path");
        let csv_deck = work.join(format!("{name}-csv"));
        let db_deck = work.join(format!("{name}-db"));
        let a = run(
            dir,
            &[
                "build",
                path.to_str().unwrap(),
                "--no-cache",
                "--allow-path",
                plugins,
                "--out",
                csv_deck.to_str().unwrap(),
            ],
            &[],
        );
        assert!(a.status.success(), "{name} from CSV: {}", text_of(&a));
        let env = [("CRESCENDO_TEST_DB", conn.as_str())];
        let b = run(
            &copy,
            &[
                "build",
                story_file.to_str().unwrap(),
                "--no-cache",
                "--allow-path",
                plugins,
                "--out",
                db_deck.to_str().unwrap(),
            ],
            &env,
        );
        assert!(
            b.status.success(),
            "{name} from PostgreSQL: {}",
            text_of(&b)
        );
        let (fa, fb) = (read_dir_files(&csv_deck), read_dir_files(&db_deck));
        // the deck and its manifest carry no part of the connection string
        for (n, bytes) in &fb {
            let t = String::from_utf8_lossy(bytes);
            assert!(
                !t.contains(PASSWORD) && !t.contains("CRESCENDO_TEST_DB="),
                "{name}: `{n}` holds the connection string"
            );
        }
        let names_a: Vec<&String> = fa.iter().map(|(n, _)| n).collect();
        let names_b: Vec<&String> = fb.iter().map(|(n, _)| n).collect();
        assert_eq!(names_a, names_b, "{name}: the decks hold different files");
        for ((n, x), (_, y)) in fa.iter().zip(&fb) {
            assert!(
                x == y,
                "{name}: `{n}` differs between the CSV and the PostgreSQL deck"
            );
        }
        let explain = run(
            &copy,
            &[
                "check",
                "--explain-sql",
                story_file.to_str().unwrap(),
                "--allow-path",
                plugins,
            ],
            &env,
        );
        assert!(explain.status.success(), "{}", text_of(&explain));
        let out = String::from_utf8_lossy(&explain.stdout).to_string();
        assert!(out.contains("SELECT "), "{name}: {out}");
        let views = out.matches("-- view ").count();
        println!("{name}: {views} views computed in the database");
        pushed_by.push((name.clone(), views));
        pushed += views;
        assert!(!out.contains(PASSWORD));
    }
    // Views were computed in the database, not only rows fetched: every
    // view that starts with `keep` or `by` over an item no chart or value
    // reads directly (routes has none).
    let expected = [
        ("clinics", 4),
        ("libraries", 5),
        ("pools", 2),
        ("routes", 0),
        ("volunteers", 2),
    ];
    let got: Vec<(&str, usize)> = pushed_by.iter().map(|(n, v)| (n.as_str(), *v)).collect();
    assert_eq!(
        got, expected,
        "views computed in the database ({pushed} in all)"
    );
    aggregates(cluster, &mut client, &work);
    pipelines(cluster, &mut client, &work);
    buckets(cluster, &mut client, &work);
    quarters(cluster, &mut client, &work);
    formats(cluster, &mut client, &work);
}

/// The ledger of `tests/formats.rs` (CSV, workbooks, Parquet) in
/// PostgreSQL builds the same deck, byte for byte, as its CSV file.
fn formats(cluster: &Cluster, client: &mut postgres::Client, work: &Path) {
    use crescendo_data::ColType;
    let dir = work.join("formats");
    std::fs::create_dir_all(&dir).expect("mkdir");
    let csv = dir.join("ledger.csv");
    std::fs::copy(root().join("tests/formats/ledger.csv"), &csv).expect("copy");
    load_csv(
        client,
        "formats_ledger",
        &csv,
        &[
            ("day".into(), ColType::Date),
            ("branch".into(), ColType::Text),
            ("amount".into(), ColType::Number),
        ],
    );
    let story = "story \"Takings at three branches\"\n\
         source \"Invented ledger of three branches\"\n\
         data ledger from SOURCE { day: date, branch: text, amount: number }\n\
         view monthly = ledger\n\
         \x20 | add month = month(day)\n\
         \x20 | by month, branch: amount = sum(amount), days = count(amount)\n\
         view weekly = ledger\n\
         \x20 | add week = week_start(day)\n\
         \x20 | by week: amount = sum(amount)\n\
         frame \"Takings by month\" {\n  line monthly: x month, y amount, series branch\n  y title \"Takings per month\"\n}\n\
         frame \"Takings by week\" {\n  bars weekly: category week, value amount\n  y title \"Takings per week\"\n}\n";
    std::fs::write(
        dir.join("csv.cresc"),
        story.replace("SOURCE", "\"ledger.csv\""),
    )
    .expect("write");
    std::fs::write(
        dir.join("db.cresc"),
        story.replace(
            "SOURCE",
            "table \"formats_ledger\" via CRESCENDO_TEST_DB in order of line",
        ),
    )
    .expect("write");
    let conn = cluster.conn();
    let env = [("CRESCENDO_TEST_DB", conn.as_str())];
    for deck in ["csv", "db"] {
        let o = run(
            &dir,
            &[
                "build",
                &format!("{deck}.cresc"),
                "--no-cache",
                "--out",
                &format!("deck-{deck}"),
            ],
            &env,
        );
        assert!(o.status.success(), "{}", text(&o));
    }
    let (fa, fb) = (
        read_dir_files(&dir.join("deck-csv")),
        read_dir_files(&dir.join("deck-db")),
    );
    assert!(fa.len() > 2);
    assert_eq!(fa.len(), fb.len());
    for ((n, x), (m, y)) in fa.iter().zip(&fb) {
        assert_eq!(n, m);
        assert!(
            x == y,
            "`{n}` differs between the CSV and the PostgreSQL deck"
        );
    }
    // both views ran in the database, buckets included
    let e = run(&dir, &["check", "--explain-sql", "db.cresc"], &env);
    assert!(e.status.success(), "{}", text(&e));
    let t = String::from_utf8_lossy(&e.stdout).to_string();
    assert_eq!(t.matches("-- view ").count(), 2, "{t}");
    assert!(t.contains("substr(") && t.contains("isodow"), "{t}");
}

/// Time buckets computed in the database and locally give the same plan:
/// a daily ledger across year ends (2020-W53, 2025-W01), a leap day and a
/// missing day, grouped by month, quarter, fiscal year and quarter (with
/// the story's own fiscal names), ISO
/// week, week start and weekday, and filtered by year.
fn buckets(cluster: &Cluster, client: &mut postgres::Client, work: &Path) {
    use crescendo_data::ColType;
    let dir = work.join("buckets");
    std::fs::create_dir_all(&dir).expect("mkdir");
    let mut csv = String::from("day,branch,amount\n");
    let days = [
        "2020-06-30",
        "2020-07-01",
        "2020-12-31",
        "2021-01-03",
        "2021-01-04",
        "2024-02-29",
        "2024-03-31",
        "2024-04-01",
        "2024-06-30",
        "2024-12-29",
        "2024-12-30",
        "2025-01-05",
    ];
    for (i, d) in days.iter().enumerate() {
        csv.push_str(&format!("{d},North,{}\n", i * 3 + 1));
        csv.push_str(&format!("{d},South,{}.5\n", i));
    }
    csv.push_str(",North,7\n");
    std::fs::write(dir.join("ledger.csv"), &csv).expect("write");
    load_csv(
        client,
        "ledger",
        &dir.join("ledger.csv"),
        &[
            ("day".into(), ColType::Date),
            ("branch".into(), ColType::Text),
            ("amount".into(), ColType::Number),
        ],
    );
    let story = "story \"Buckets\"\n\
         fiscal year starts July\n\
         fiscal names year \"GJ \", quarter \"P\"\n\
         data d from SOURCE { day: date, branch: text, amount: number }\n\
         view periods = d\n\
         \x20 | add m = month(day)\n\
         \x20 | add q = quarter(day)\n\
         \x20 | add fy = fiscal_year(day)\n\
         \x20 | add fq = fiscal_quarter(day)\n\
         \x20 | add w = week(day)\n\
         \x20 | add ws = week_start(day)\n\
         \x20 | add wd = weekday(day)\n\
         \x20 | add y = year(day)\n\
         \x20 | add qm = quarter(m)\n\
         \x20 | add ym = year(m)\n\
         \x20 | keep year(day) >= 2021 or month(day) = \"2020-07\"\n\
         view by_fq = d\n\
         \x20 | add fq = fiscal_quarter(day)\n\
         \x20 | by fq: total = sum(amount), n = count()\n\
         view by_week = d\n\
         \x20 | add ws = week_start(day)\n\
         \x20 | by ws, branch: total = sum(amount)\n\
         view by_month = d\n\
         \x20 | keep year(day) = 2024\n\
         \x20 | add m = month(day)\n\
         \x20 | by m: total = sum(amount)\n\
         frame \"Periods\" {\n  table periods\n}\n\
         frame \"Fiscal quarters\" {\n  bars by_fq: category fq, value total\n}\n\
         frame \"Weeks\" {\n  table by_week\n}\n\
         frame \"Months\" {\n  line by_month: x m, y total\n}\n";
    std::fs::write(
        dir.join("csv.cresc"),
        story.replace("SOURCE", "\"ledger.csv\""),
    )
    .expect("write");
    std::fs::write(
        dir.join("db.cresc"),
        story.replace(
            "SOURCE",
            "table \"ledger\" via CRESCENDO_TEST_DB in order of line",
        ),
    )
    .expect("write");
    let conn = cluster.conn();
    let env = [("CRESCENDO_TEST_DB", conn.as_str())];
    let a = run(&dir, &["plan", "csv.cresc"], &env);
    assert!(a.status.success(), "{}", text(&a));
    let b = run(&dir, &["plan", "db.cresc"], &env);
    assert!(b.status.success(), "{}", text(&b));
    let (pa, pb) = (
        String::from_utf8_lossy(&a.stdout),
        String::from_utf8_lossy(&b.stdout),
    );
    for (la, lb) in pa.lines().zip(pb.lines()) {
        assert_eq!(la, lb, "the plans differ");
    }
    assert_eq!(pa, pb);
    // ISO 8601 weeks at year ends, fiscal years named by their last year
    // (with the story's fiscal names, in SQL as in memory)
    for want in [
        "2020-W53",
        "2025-W01",
        "GJ 2021 P1",
        "GJ 2025 P2",
        "2024 Q1",
        "Sun",
    ] {
        assert!(pa.contains(want), "`{want}` in {pa}");
    }
    let e = run(&dir, &["check", "--explain-sql", "db.cresc"], &env);
    assert!(e.status.success(), "{}", text(&e));
    let t = String::from_utf8_lossy(&e.stdout).to_string();
    assert_eq!(t.matches("-- view ").count(), 4, "{t}");
    assert!(t.contains("'IYYY-\"W\"IW'") && t.contains("isodow"), "{t}");
}

/// A year and a quarter column made one quarterly time
/// (`year_quarter`), pushed down and computed locally: identical plans,
/// with numbers and texts (`Q1`, ` q2 `, `3`) for the quarter, years and
/// whole numbers for the year, and missing cells missing on both sides.
/// (Cells that make no quarter are an error on a file,
/// `tests/quarters.rs`; the database still gives a missing time.)
fn quarters(cluster: &Cluster, client: &mut postgres::Client, work: &Path) {
    use crescendo_data::ColType;
    let dir = work.join("quarters");
    std::fs::create_dir_all(&dir).expect("mkdir");
    let csv = "yr,yn,qn,qt,amount\n\
        2023,2023,1,Q1,10\n2023,2023,2, q2 ,11\n2023,2023,3,3,12\n2023,2023,4,Q4,13\n\
        2024,2024,1,q1,14\n2024,2024,2,Q2,15\n2024,2024,3,Q3,16\n2024,,4,,17\n";
    std::fs::write(dir.join("q.csv"), csv).expect("write");
    load_csv(
        client,
        "quarters_t",
        &dir.join("q.csv"),
        &[
            ("yr".into(), ColType::Year),
            ("yn".into(), ColType::Number),
            ("qn".into(), ColType::Number),
            ("qt".into(), ColType::Text),
            ("amount".into(), ColType::Number),
        ],
    );
    let story = "story \"Quarters\"\n\
         data d from SOURCE { yr: year, yn: number, qn: number, qt: text, amount: number }\n\
         view made = d\n\
         \x20 | add a = year_quarter(yr, qn)\n\
         \x20 | add b = year_quarter(yn, qt)\n\
         \x20 | keep a >= \"2023-04\"\n\
         view per_quarter = d\n\
         \x20 | add time = year_quarter(yr, qt)\n\
         \x20 | by time: total = sum(amount)\n\
         frame \"Made\" {\n  table made\n}\n\
         frame \"Per quarter\" {\n  line per_quarter: x time, y total\n}\n";
    std::fs::write(dir.join("csv.cresc"), story.replace("SOURCE", "\"q.csv\"")).expect("write");
    std::fs::write(
        dir.join("db.cresc"),
        story.replace(
            "SOURCE",
            "table \"quarters_t\" via CRESCENDO_TEST_DB in order of line",
        ),
    )
    .expect("write");
    let conn = cluster.conn();
    let env = [("CRESCENDO_TEST_DB", conn.as_str())];
    let a = run(&dir, &["plan", "csv.cresc"], &env);
    assert!(a.status.success(), "{}", text(&a));
    let b = run(&dir, &["plan", "db.cresc"], &env);
    assert!(b.status.success(), "{}", text(&b));
    let (pa, pb) = (
        String::from_utf8_lossy(&a.stdout),
        String::from_utf8_lossy(&b.stdout),
    );
    for (la, lb) in pa.lines().zip(pb.lines()) {
        assert_eq!(la, lb, "the plans differ");
    }
    assert_eq!(pa, pb);
    // 2023 Q2 starts in April; the fourth quarter in October
    for want in ["Apr 2023", "Oct 2023"] {
        assert!(pa.contains(want), "`{want}` in {pa}");
    }
    let e = run(&dir, &["check", "--explain-sql", "db.cresc"], &env);
    let t = String::from_utf8_lossy(&e.stdout).to_string();
    assert!(e.status.success(), "{}", text(&e));
    assert_eq!(t.matches("-- view ").count(), 2, "{t}");
    assert!(t.contains("lpad("), "{t}");
}

/// Every aggregate, filters with arithmetic and missing cells, pushed down
/// and computed locally: the frame plans (which hold every bar's value at
/// full precision) are identical. Data: the volunteers' hours (one
/// decimal) and the pools' visits (with missing cells).
fn aggregates(cluster: &Cluster, client: &mut postgres::Client, work: &Path) {
    use crescendo_data::ColType;
    let dir = work.join("aggregates");
    std::fs::create_dir_all(&dir).expect("mkdir");
    let hours = root().join("stories/volunteers/data/hours.csv");
    let visits = root().join("stories/pools/data/visits.csv");
    std::fs::copy(&hours, dir.join("hours.csv")).expect("copy");
    std::fs::copy(&visits, dir.join("visits.csv")).expect("copy");
    load_csv(
        client,
        "agg_hours",
        &hours,
        &[
            ("task".into(), ColType::Text),
            ("quarter".into(), ColType::Text),
            ("hours".into(), ColType::Number),
        ],
    );
    load_csv(
        client,
        "agg_visits",
        &visits,
        &[
            ("month".into(), ColType::Month),
            ("pool".into(), ColType::Text),
            ("visits".into(), ColType::Number),
        ],
    );
    let measures = ["total", "avg", "mid", "lo", "hi", "one", "final", "n", "nh"];
    let mut story = String::from(
        "story \"Aggregates\"\n\
         data h from SOURCE_H { quarter: text, task: text, hours: number }\n\
         data v from SOURCE_V { month: month, pool: text, visits: number }\n\
         view by_task = h\n\
         \x20 | keep hours * 1.5 > 30 or not (task in (\"Warehouse inventory\", \"Sorting donated produce\"))\n\
         \x20 | by task: total = sum(hours), avg = mean(hours), mid = median(hours), lo = min(hours), hi = max(hours), one = first(hours), final = last(hours), n = count(), nh = count(hours)\n\
         view by_pool = v\n\
         \x20 | keep month >= \"2022-01\" and visits / 3 < 2000\n\
         \x20 | by pool, month: total = sum(visits), avg = mean(visits), mid = median(visits), lo = min(visits), hi = max(visits), one = first(visits), final = last(visits), n = count(), nh = count(visits)\n\
         view per_pool = v\n\
         \x20 | by pool: total = sum(visits), avg = mean(visits), mid = median(visits), lo = min(visits), hi = max(visits), one = first(visits), final = last(visits), n = count(), nh = count(visits)\n\
         view derived = h\n\
         \x20 | add quarter_share = hours / 4\n\
         \x20 | keep quarter_share > 20 or hours * 2 < 100\n\
         \x20 | add twice = quarter_share * 8 - hours\n\
         \x20 | by task: s = sum(quarter_share), m = median(twice), mx = max(quarter_share), f = first(twice), c = count(twice), a = mean(twice)\n\
         view months = v\n\
         \x20 | by pool: first_month = min(month), last_month = max(month), total = sum(visits)\n",
    );
    for m in measures {
        story.push_str(&format!(
            "frame \"{m} by task\" {{\n  bars by_task: category task, value {m}\n}}\n"
        ));
        story.push_str(&format!(
            "frame \"{m} by pool\" {{\n  bars per_pool: category pool, value {m}\n}}\n"
        ));
    }
    story.push_str("frame \"Westbrook\" {\n  line by_pool: x month, y avg, series pool\n}\n");
    for m in ["s", "m", "mx", "f", "c", "a"] {
        story.push_str(&format!(
            "frame \"derived {m}\" {{\n  bars derived: category task, value {m}\n}}\n"
        ));
    }
    story.push_str("value first_month = first(months.first_month)\nvalue last_month = last(months.last_month)\n");
    let csv = story
        .replace("SOURCE_H", "\"hours.csv\"")
        .replace("SOURCE_V", "\"visits.csv\"");
    let db = story
        .replace(
            "SOURCE_H",
            "table \"agg_hours\" via CRESCENDO_TEST_DB in order of line",
        )
        .replace(
            "SOURCE_V",
            "table \"agg_visits\" via CRESCENDO_TEST_DB in order of line",
        );
    std::fs::write(dir.join("csv.cresc"), csv).expect("write");
    std::fs::write(dir.join("db.cresc"), db).expect("write");
    let conn = cluster.conn();
    let env = [("CRESCENDO_TEST_DB", conn.as_str())];
    let a = run(&dir, &["plan", "csv.cresc"], &env);
    assert!(a.status.success(), "{}", text(&a));
    let b = run(&dir, &["plan", "db.cresc"], &env);
    assert!(b.status.success(), "{}", text(&b));
    let (pa, pb) = (
        String::from_utf8_lossy(&a.stdout),
        String::from_utf8_lossy(&b.stdout),
    );
    assert!(pa.len() > 1000);
    for (la, lb) in pa.lines().zip(pb.lines()) {
        assert_eq!(la, lb, "the plans differ");
    }
    assert_eq!(pa, pb);
    let e = run(&dir, &["check", "--explain-sql", "db.cresc"], &env);
    let t = text(&e);
    assert_eq!(t.matches("-- view ").count(), 5, "{t}");
    assert!(t.contains("-- view derived"), "{t}");
}

/// The steps after the first `by` (and row-level `sort` and `columns`)
/// pushed down: sorts in both directions with missing values and ties,
/// `columns`, `keep` and `add` after the group, and a `top` with a rest
/// label equal to an existing category (run locally after the pushed
/// prefix). The plans (every value at full precision) and the decks are
/// identical to the ones built from the CSV file; the SQL holds the sorts;
/// each view receives exactly its final rows (or, for the view with `top`,
/// the rows `top` reads).
fn pipelines(cluster: &Cluster, client: &mut postgres::Client, work: &Path) {
    use crescendo_data::ColType;
    let dir = work.join("pipelines");
    std::fs::create_dir_all(&dir).expect("mkdir");
    // North and West tie at 10 (North first), East and Central at 5 (East
    // first); Islands has no amount; one row has no region; `Other` is
    // already a region.
    let csv = "region,shop,amount,units\n\
               North,a,10,1\n\
               South,b,,2\n\
               East,c,5,3\n\
               West,d,10,4\n\
               Other,e,3,5\n\
               North,f,,6\n\
               Central,g,5,\n\
               South,h,2.5,8\n\
               ,i,1,9\n\
               East,j,0,10\n\
               West,k,0,11\n\
               Islands,l,,12\n";
    std::fs::write(dir.join("sales.csv"), csv).expect("write");
    load_csv(
        client,
        "pipe_sales",
        &dir.join("sales.csv"),
        &[
            ("region".into(), ColType::Text),
            ("shop".into(), ColType::Text),
            ("amount".into(), ColType::Number),
            ("units".into(), ColType::Number),
        ],
    );
    let story = "story \"Pipelines\"\n\
         data d from SOURCE { region: text, shop: text, amount: number, units: number }\n\
         view falling = d\n\
         \x20 | by region: total = sum(amount), n = count(), avg = mean(amount), mid = median(amount), one = first(shop)\n\
         \x20 | sort total descending\n\
         \x20 | add share = total / 4\n\
         \x20 | keep n > 0\n\
         \x20 | columns region, total, share, n, avg, mid, one\n\
         view rising = d\n\
         \x20 | by region: total = sum(units), low = min(amount)\n\
         \x20 | sort low, total descending\n\
         view shops = d\n\
         \x20 | by region, shop: spent = sum(amount)\n\
         \x20 | keep spent > 1\n\
         \x20 | add twice = spent * 2 - 1\n\
         \x20 | sort twice descending, region\n\
         \x20 | columns region, twice\n\
         view topped = d\n\
         \x20 | by region: total = sum(amount), units = sum(units)\n\
         \x20 | sort region\n\
         \x20 | top 3 region by total rest \"Other\"\n\
         view rows = d\n\
         \x20 | sort region descending, amount\n\
         \x20 | keep units > 2\n\
         \x20 | columns shop, region, amount\n\
         view narrow = d\n\
         \x20 | columns region, amount\n\
         \x20 | by region: s = sum(amount)\n\
         frame \"Falling\" {\n  table falling\n}\n\
         frame \"Rising\" {\n  table rising\n}\n\
         frame \"Shops\" {\n  table shops\n}\n\
         frame \"Topped\" {\n  table topped\n}\n\
         frame \"Rows\" {\n  table rows\n}\n\
         frame \"Narrow\" {\n  table narrow\n}\n";
    std::fs::write(
        dir.join("csv.cresc"),
        story.replace("SOURCE", "\"sales.csv\""),
    )
    .expect("write");
    std::fs::write(
        dir.join("db.cresc"),
        story.replace(
            "SOURCE",
            "table \"pipe_sales\" via CRESCENDO_TEST_DB in order of line",
        ),
    )
    .expect("write");
    let conn = cluster.conn();
    let env = [("CRESCENDO_TEST_DB", conn.as_str())];
    let a = run(&dir, &["plan", "csv.cresc"], &env);
    assert!(a.status.success(), "{}", text(&a));
    let b = run(&dir, &["plan", "db.cresc"], &env);
    assert!(b.status.success(), "{}", text(&b));
    let (pa, pb) = (
        String::from_utf8_lossy(&a.stdout),
        String::from_utf8_lossy(&b.stdout),
    );
    for (la, lb) in pa.lines().zip(pb.lines()) {
        assert_eq!(la, lb, "the plans differ");
    }
    assert_eq!(pa, pb);
    // The local engine's order, read in the plan: North before West (a tie
    // at 10, first appearance), East before Central (a tie at 5), the
    // missing total last although the sort is descending.
    let at = |s: &str| pa.find(s).unwrap_or_else(|| panic!("`{s}` in {pa}"));
    assert!(at("North") < at("West") && at("East") < at("Central"));
    for deck in ["csv", "db"] {
        let o = run(
            &dir,
            &[
                "build",
                &format!("{deck}.cresc"),
                "--no-cache",
                "--out",
                &format!("deck-{deck}"),
            ],
            &env,
        );
        assert!(o.status.success(), "{}", text(&o));
    }
    let (fa, fb) = (
        read_dir_files(&dir.join("deck-csv")),
        read_dir_files(&dir.join("deck-db")),
    );
    assert!(!fa.is_empty());
    assert_eq!(fa.len(), fb.len());
    for ((n, x), (m, y)) in fa.iter().zip(&fb) {
        assert_eq!(n, m);
        assert!(
            x == y,
            "`{n}` differs between the CSV and the PostgreSQL deck"
        );
    }
    let e = run(&dir, &["check", "--explain-sql", "db.cresc"], &env);
    assert!(e.status.success(), "{}", text(&e));
    let t = String::from_utf8_lossy(&e.stdout).to_string();
    // One query per view, each with its sort and its final order.
    let mut received = std::collections::BTreeMap::new();
    for part in t.split("-- view ").skip(1) {
        let view = part.split_whitespace().next().expect("a view name");
        let rows: u64 = part
            .split("--   received ")
            .nth(1)
            .and_then(|r| r.split(' ').next())
            .and_then(|n| n.parse().ok())
            .unwrap_or_else(|| panic!("rows received in {part}"));
        received.insert(view.to_string(), (rows, part.to_string()));
    }
    let sql = |v: &str| received.get(v).map(|(_, s)| s.as_str()).unwrap_or("");
    let rows = |v: &str| received.get(v).map_or(u64::MAX, |(r, _)| *r);
    assert_eq!(received.len(), 6, "{t}");
    assert!(
        sql("falling")
            .contains("row_number() OVER (ORDER BY t0.v1::double precision DESC NULLS LAST"),
        "{t}"
    );
    // `keep n > 0` after the group, a WHERE conjunct: no COALESCE needed
    assert!(
        sql("falling")
            .contains(" WHERE (t1.v2::double precision > CAST($2::text AS double precision))"),
        "{t}"
    );
    assert!(
        sql("rising").contains("ASC NULLS LAST") && sql("rising").contains("DESC NULLS LAST"),
        "{t}"
    );
    assert!(
        sql("rows").contains("COLLATE \"C\") DESC NULLS LAST"),
        "{t}"
    );
    for v in ["falling", "rising", "shops", "topped", "rows"] {
        assert!(sql(v).contains(" ORDER BY t"), "{v}: {t}");
    }
    // Rows received are the view's final rows: 8 regions (the missing
    // region included) in `falling` and `rising`; shops with more than 1
    // spent: a, c, d, e, g, h (10, 5, 10, 3, 5, 2.5); rows with units > 2: 9; the
    // 8 regions `top` folds locally; `narrow` fetches every row (its
    // prefix is `columns` alone, then `by` runs locally).
    assert_eq!(rows("falling"), 8, "{t}");
    assert_eq!(rows("rising"), 8, "{t}");
    assert_eq!(rows("shops"), 6, "{t}");
    assert_eq!(rows("topped"), 8, "{t}");
    assert_eq!(rows("rows"), 9, "{t}");
    assert_eq!(rows("narrow"), 12, "{t}");
    assert!(t.contains("received"), "{t}");
}

fn text_of(o: &Output) -> String {
    text(o)
}

fn copy_dir(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).expect("mkdir");
    for e in std::fs::read_dir(from).expect("read dir") {
        let p = e.expect("entry").path();
        let name = p.file_name().expect("name");
        if name == "deck" || name == ".crescendo-cache" {
            continue;
        }
        if p.is_dir() {
            copy_dir(&p, &to.join(name));
        } else {
            std::fs::copy(&p, to.join(name)).expect("copy");
        }
    }
}

/// Names with quotes, semicolons and unicode; a category that looks like an
/// injection survives untouched and the tables are intact afterwards.
fn hostile_names(cluster: &Cluster) {
    let mut client = cluster.client();
    client
        .batch_execute(
            r#"
            DROP SCHEMA IF EXISTS "sch;ema ü" CASCADE;
            DROP TABLE IF EXISTS x;
            CREATE TABLE x (keep_me integer);
            INSERT INTO x VALUES (1), (2), (3);
            CREATE SCHEMA "sch;ema ü";
            CREATE TABLE "sch;ema ü"."we""ird; tab'le ü" (
                line integer, cat text, n numeric, "odd ""col""; ü" text);
            INSERT INTO "sch;ema ü"."we""ird; tab'le ü" VALUES
                (1, '''); DROP TABLE x; --', 2, 'a'),
                (2, 'O''Brien "quoted"', 10, 'b'),
                (3, '''); DROP TABLE x; --', 3, NULL),
                (4, 'ünïcødé; ok', 7, 'c');
            "#,
        )
        .expect("hostile fixture");
    let dir = root().join("target").join("pghostile");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("mkdir");
    let story = r#"story "Hostile names"
data odd from table "sch;ema ü"."we\"ird; tab'le ü" via CRESCENDO_TEST_DB in order of line
data unordered from table "sch;ema ü"."we\"ird; tab'le ü" via CRESCENDO_TEST_DB
view totals = odd
  | keep (cat != "ünïcødé; ok" or n > 5) and n > 0
  | by cat: total = sum(n), first_line = first(line)
view counted = unordered
  | keep cat in ("'); DROP TABLE x; --", "O'Brien \"quoted\"")
  | by cat: rows = count()
value hostile = sum(totals.total where cat = "'); DROP TABLE x; --")
value quoted = sum(totals.total where cat = "O'Brien \"quoted\"")
value hostile_rows = sum(counted.rows where cat = "'); DROP TABLE x; --")
value first_cat = first(totals.cat)
frame "Totals by category" {
  bars totals: category cat, value total
}
frame "Every row" {
  table odd
}
"#;
    std::fs::write(dir.join("story.cresc"), story).expect("write");
    let conn = cluster.conn();
    let out = run(
        &dir,
        &["check", "--explain-sql", "story.cresc"],
        &[("CRESCENDO_TEST_DB", conn.as_str())],
    );
    let t = text(&out);
    assert!(out.status.success(), "{t}");
    assert!(t.contains("value hostile = 5"), "{t}");
    assert!(t.contains("value quoted = 10"), "{t}");
    assert!(t.contains("value hostile_rows = 2"), "{t}");
    assert!(t.contains("value first_cat = '); DROP TABLE x; --"), "{t}");
    // The hostile category went as a bound value, never as SQL text.
    assert!(t.contains(r#"$1 = "'); DROP TABLE x; --""#), "{t}");
    assert!(
        !t.lines()
            .any(|l| l.starts_with("SELECT") && l.contains("DROP")),
        "{t}"
    );
    // A `table` chart reads every column, the hostile one included, quoted.
    assert!(t.contains(r#""odd ""col""; ü"::text AS c"#), "{t}");
    assert!(t.contains(r#"FROM "sch;ema ü"."we""ird; tab'le ü""#), "{t}");
    let built = run(
        &dir,
        &["build", "story.cresc", "--no-cache"],
        &[("CRESCENDO_TEST_DB", conn.as_str())],
    );
    assert!(built.status.success(), "{}", text(&built));
    let svg = std::fs::read_to_string(dir.join("deck").join("02-every-row.svg")).expect("deck");
    assert!(
        svg.contains("columns Line, Cat, N, Odd &quot;col&quot;; ü"),
        "the hostile column is not in the table frame"
    );
    let n: i64 = client
        .query_one("SELECT count(*) FROM x", &[])
        .expect("x is still there")
        .get(0);
    assert_eq!(n, 3);
    let n: i64 = client
        .query_one(
            r#"SELECT count(*) FROM "sch;ema ü"."we""ird; tab'le ü""#,
            &[],
        )
        .expect("the hostile table is still there")
        .get(0);
    assert_eq!(n, 4);
    // A `query` source runs read-only and as one statement: writing fails,
    // a second statement cannot ride along, and `x` stays intact.
    for (what, query, says) in [
        (
            "a write",
            "with d as (delete from x returning keep_me) select keep_me from d",
            "data-modifying statement",
        ),
        (
            "a second statement",
            "select 1 as keep_me) as a; drop table x; select (1",
            "cannot insert multiple commands",
        ),
        (
            "a function that writes",
            "select keep_me, nextval('s_hostile') as n from x",
            "read-only transaction",
        ),
    ] {
        client
            .batch_execute("CREATE SEQUENCE IF NOT EXISTS s_hostile")
            .expect("sequence");
        let story = format!(
            "story \"Writes\"\ndata w from query \"{}\" via CRESCENDO_TEST_DB\nview v = w\n  | by keep_me: n = count()\nframe \"f\" {{\n  bars v: category keep_me, value n\n}}\n",
            query.replace('"', "\\\"")
        );
        std::fs::write(dir.join("writes.cresc"), story).expect("write");
        let out = run(
            &dir,
            &["check", "writes.cresc"],
            &[("CRESCENDO_TEST_DB", conn.as_str())],
        );
        let t = text(&out);
        assert!(!out.status.success(), "{what}: {t}");
        assert!(
            t.contains("cannot read data `w`") && t.contains(says),
            "{what}: {t}"
        );
        let n: i64 = client
            .query_one("SELECT count(*) FROM x", &[])
            .expect("x is still there")
            .get(0);
        assert_eq!(n, 3, "{what}");
    }
}

/// Server down, wrong password, missing table, statement timeout and a
/// connection dropped mid-query: each a located error naming the data
/// statement, a non-zero exit, and the previous deck kept.
fn faults(cluster: &Cluster) {
    let mut client = cluster.client();
    client
        .batch_execute(
            "DROP TABLE IF EXISTS faults_t; CREATE TABLE faults_t (line integer, k text, v numeric);
             INSERT INTO faults_t VALUES (1, 'a', 1), (2, 'b', 2), (3, 'a', 3);
             DROP ROLE IF EXISTS tls_reader;",
        )
        .expect("faults fixture");
    client
        .batch_execute(&format!(
            "CREATE ROLE tls_reader LOGIN PASSWORD '{PASSWORD}'; GRANT SELECT ON faults_t TO tls_reader;"
        ))
        .expect("tls role");
    let dir = root().join("target").join("pgfaults");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("mkdir");
    let story = |source: &str| {
        format!(
            "story \"Faults\"\n\ndata f from {source}\nview t = f\n  | by k: v = sum(v)\n\nframe \"Totals\" {{\n  bars t: category k, value v\n}}\n"
        )
    };
    let good = story("table \"faults_t\" via CRESCENDO_TEST_DB in order of line");
    std::fs::write(dir.join("story.cresc"), &good).expect("write");
    let conn = cluster.conn();
    let deck = dir.join("deck");
    let ok = run(
        &dir,
        &["build", "story.cresc", "--no-cache"],
        &[("CRESCENDO_TEST_DB", conn.as_str())],
    );
    assert!(ok.status.success(), "{}", text(&ok));
    let before = read_dir_files(&deck);
    assert!(!before.is_empty());

    let heavy = "query \"select (a.n % 3)::text as k, 1 as v from generate_series(1, 200000) a(n), generate_series(1, 200000) b(m)\" via CRESCENDO_TEST_DB";
    let check = |what: &str, story_text: &str, conn: &str, extra: &[&str], label: &str| -> String {
        std::fs::write(dir.join("story.cresc"), story_text).expect("write");
        let mut args = vec!["build", "story.cresc", "--no-cache"];
        args.extend_from_slice(extra);
        let out = run(&dir, &args, &[("CRESCENDO_TEST_DB", conn)]);
        let t = text(&out);
        assert!(!out.status.success(), "{what}: the build should fail\n{t}");
        assert!(t.contains("cannot read data `f`"), "{what}: {t}");
        assert!(
            t.contains("story.cresc:3:"),
            "{what}: not located on the data line\n{t}"
        );
        assert!(t.contains(label), "{what}: {t}");
        assert!(
            !t.contains(PASSWORD) && !t.contains("Wr0ng-pa55"),
            "{what}: a password leaked\n{t}"
        );
        assert_eq!(
            read_dir_files(&deck),
            before,
            "{what}: the previous deck was not kept"
        );
        println!("{what}:\n{t}");
        t
    };
    // Server down: a port where nothing listens.
    let down = format!(
        "host=127.0.0.1 port={} user=postgres password={PASSWORD} dbname=postgres connect_timeout=5",
        free_port()
    );
    check("server down", &good, &down, &[], "cannot connect");
    // Wrong password.
    let wrong = format!(
        "host=127.0.0.1 port={} user=postgres password=Wr0ng-pa55 dbname=postgres",
        cluster.port
    );
    check(
        "wrong password",
        &good,
        &wrong,
        &[],
        "password authentication failed",
    );
    // Missing table.
    check(
        "missing table",
        &story("table \"no_such_table\" via CRESCENDO_TEST_DB"),
        &conn,
        &[],
        "does not exist",
    );
    // TLS to a server whose certificate no trusted root signed: refused
    // (the test CA is not among the system's roots).
    let tls_conn = format!(
        "host=127.0.0.1 port={} user=tls_reader password={PASSWORD} dbname=postgres sslmode=require",
        cluster.port
    );
    check(
        "TLS with an untrusted certificate",
        &good,
        &tls_conn,
        &[],
        "certificate",
    );
    // The same with the test CA trusted (rustls-native-certs reads
    // SSL_CERT_FILE): the build succeeds over TLS, and gives the same deck.
    // `tls_reader` is refused without TLS, so this build did use it.
    let ca = cluster.ca.to_str().expect("utf-8 path");
    let over_tls = run(
        &dir,
        &["build", "story.cresc", "--no-cache"],
        &[
            ("CRESCENDO_TEST_DB", tls_conn.as_str()),
            ("SSL_CERT_FILE", ca),
        ],
    );
    assert!(over_tls.status.success(), "over TLS: {}", text(&over_tls));
    assert_eq!(
        read_dir_files(&deck),
        before,
        "the deck built over TLS differs"
    );
    let plain = tls_conn.replace("sslmode=require", "sslmode=disable");
    check(
        "TLS refused by the role",
        &good,
        &plain,
        &[],
        "no encryption",
    );
    // A column whose database type the story cannot read.
    client
        .batch_execute(
            "DROP TABLE IF EXISTS typed_t; CREATE TABLE typed_t (line integer, k text, flag boolean, v numeric);",
        )
        .expect("typed fixture");
    let t = check(
        "unsupported type",
        &story("table \"typed_t\" via CRESCENDO_TEST_DB { k: text, flag: text }"),
        &conn,
        &[],
        "column `flag` cannot be read",
    );
    assert!(t.contains("`boolean`"), "{t}");
    // Statement timeout: a huge cross join in a read-only query.
    let started = Instant::now();
    check(
        "statement timeout",
        &story(heavy),
        &conn,
        &["--statement-timeout", "1"],
        "statement timeout",
    );
    assert!(started.elapsed() < Duration::from_secs(30));
    // Connection dropped mid-query: a second connection terminates it.
    let killer = {
        let conn = conn.clone();
        std::thread::spawn(move || {
            let mut c =
                postgres::Client::connect(&conn, postgres::NoTls).expect("second connection");
            let until = Instant::now() + Duration::from_secs(60);
            while Instant::now() < until {
                let rows = c
                    .query(
                        "SELECT pg_terminate_backend(pid) FROM pg_stat_activity \
                         WHERE application_name = 'crescendo' AND state = 'active' \
                         AND query LIKE '%generate_series%' AND pid <> pg_backend_pid()",
                        &[],
                    )
                    .expect("terminate");
                if !rows.is_empty() {
                    return true;
                }
                std::thread::sleep(Duration::from_millis(100));
            }
            false
        })
    };
    check(
        "connection dropped",
        &story(heavy),
        &conn,
        &["--statement-timeout", "120"],
        "connection",
    );
    assert!(
        killer.join().expect("killer thread"),
        "the query was never seen running"
    );
    std::fs::write(dir.join("story.cresc"), &good).expect("write");
}

/// A `keep` the database computes with a text no row reaching it holds
/// (before and after its `by`): a located error with a suggestion, asked
/// of the database; spelt right, the build succeeds.
fn unmatched_texts(cluster: &Cluster) {
    let mut client = cluster.client();
    client
        .batch_execute(
            "DROP TABLE IF EXISTS probe_t; CREATE TABLE probe_t (line integer, k text, c text, v numeric);
             INSERT INTO probe_t VALUES (1, 'North', 'Oslo', 1), (2, 'South', 'Rome', 2), (3, 'North', 'Bergen', 3);",
        )
        .expect("probe fixture");
    let dir = root().join("target").join("pgprobe");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("mkdir");
    let conn = cluster.conn();
    let build = |steps: &str| {
        let story = format!(
            "story \"Probe\"\n\ndata f from table \"probe_t\" via CRESCENDO_TEST_DB in order of line\nview t = f\n{steps}\nframe \"T\" {{\n  bars t: category k, value v\n}}\n"
        );
        std::fs::write(dir.join("story.cresc"), story).expect("write");
        let out = run(
            &dir,
            &["build", "story.cresc", "--no-cache"],
            &[("CRESCENDO_TEST_DB", conn.as_str())],
        );
        (out.status.success(), text(&out))
    };
    let cases = [
        // before the group: no row has the text
        (
            "  | keep k = \"Nrth\"\n  | by k: v = sum(v)\n",
            "story.cresc:5:14",
            "did you mean \"North\"?",
        ),
        // the rows reaching the second keep are the northern ones
        (
            "  | keep k = \"North\"\n  | keep c in (\"Oslo\", \"Rome\")\n  | by k: v = sum(v)\n",
            "story.cresc:6:24",
            "`c` holds \"Oslo\", \"Bergen\"",
        ),
        // after the group
        (
            "  | by k: v = sum(v)\n  | keep k != \"Suth\"\n",
            "story.cresc:6:15",
            "did you mean \"South\"?",
        ),
    ];
    for (steps, at, help) in cases {
        let (ok, t) = build(steps);
        assert!(!ok, "{steps}: the build should fail\n{t}");
        assert!(t.contains("error[no-match]"), "{steps}: {t}");
        assert!(t.contains(at), "{steps}: not at {at}\n{t}");
        assert!(t.contains(help), "{steps}: {t}");
    }
    let (ok, t) = build("  | keep k = \"North\" and c != \"Rome\"\n  | by k: v = sum(v)\n");
    // one step: Rome is a row's city (a southern one), so no error
    assert!(ok, "{t}");
    let (ok, t) = build("  | keep k = \"North\"\n  | by k: v = sum(v)\n  | keep k = \"North\"\n");
    assert!(ok, "{t}");
}

/// A decimal with its trailing zeros (and a bare trailing point) removed,
/// so that `0.300000` and `0.3` compare equal.
fn trimmed(d: &str) -> &str {
    if d.contains('.') && !d.contains(['e', 'E']) {
        d.trim_end_matches('0').trim_end_matches('.')
    } else {
        d
    }
}

/// Sums and means of a `double precision` column as the printer writes
/// them (integers of the values with few decimals, the text of the rest)
/// equal the exact sums of the values' shortest texts,
/// `sum(x::text::numeric)`, group by group: values with up to six
/// decimals and with more, at and around the 2^32 bound, tiny, huge,
/// `-0`, NaN, infinities, NULLs and random values of every scale.
fn float_sums(cluster: &Cluster) {
    let mut client = cluster.client();
    client
        .batch_execute(
            "DROP TABLE IF EXISTS float_sums;
             CREATE TABLE float_sums (line bigint GENERATED ALWAYS AS IDENTITY, g text, x double precision);
             INSERT INTO float_sums (g, x) VALUES
               ('edge', 0.1), ('edge', 0.2), ('edge', 0.30000000000000004), ('edge', 1.0 / 3),
               ('edge', 256.99), ('edge', -256.99), ('edge', 123456.1234567), ('edge', 0.000001),
               ('edge', -0.0000005), ('edge', 1e-7), ('edge', 5e-324), ('edge', 1e15), ('edge', 1e300),
               ('edge', -1e300), ('edge', 2.5), ('edge', NULL),
               ('bound', 4294967295.999999), ('bound', 4294967296), ('bound', 4294967296.000001),
               ('bound', -4294967295.5), ('bound', -4294967296.25), ('bound', 8589934591.75),
               ('bound', 9007199254.740991), ('bound', 4503599627370495.5),
               ('zero', '-0'), ('zero', '-0'), ('nulls', NULL), ('nulls', NULL),
               ('nan', 1.5), ('nan', 'NaN'), ('inf', 'Infinity'), ('inf', 2.25),
               ('both inf', 'Infinity'), ('both inf', '-Infinity');
             INSERT INTO float_sums (g, x)
               SELECT 'scale ' || k, round(((random() * 2 - 1) * 10 ^ (random() * 12 - 2) * 10 ^ k)::numeric)::double precision / 10 ^ k
               FROM generate_series(0, 9) k, generate_series(1, 2000);
             INSERT INTO float_sums (g, x)
               SELECT 'raw', (random() * 2 - 1) * 10 ^ (random() * 24 - 12) FROM generate_series(1, 20000);",
        )
        .expect("make the float table");
    let printed = printed_sums(cluster, &mut client, "float_sums", false);
    assert_eq!(printed.len(), 18);
    // the values with at most six decimals below 2^32 are summed as the
    // scaled integers, with no second query
    client
        .batch_execute(
            "DROP TABLE IF EXISTS short_sums;
             CREATE TABLE short_sums (line bigint GENERATED ALWAYS AS IDENTITY, g text, x double precision);
             INSERT INTO short_sums (g, x) VALUES ('edge', '-0'), ('edge', NULL), ('edge', 4294967295.999999),
               ('edge', -4294967295.5), ('edge', 0.000001), ('nulls', NULL);
             INSERT INTO short_sums (g, x)
               SELECT 'scale ' || k, round(((random() * 2 - 1) * 10 ^ (random() * 9) * 10 ^ k)::numeric)::double precision / 10 ^ k
               FROM generate_series(0, 6) k, generate_series(1, 2000);",
        )
        .expect("make the short decimal table");
    assert_eq!(
        printed_sums(cluster, &mut client, "short_sums", true).len(),
        9
    );
    let group = |g: &str| {
        printed
            .iter()
            .find(|r| r[0].as_deref() == Some(g))
            .expect("group")
    };
    assert_eq!(group("nulls")[1], None);
    assert_eq!(group("zero")[1].as_deref().map(trimmed), Some("0"));
    assert_eq!(group("nan")[1].as_deref(), Some("NaN"));
    assert_eq!(group("inf")[1].as_deref(), Some("Infinity"));
}

/// The sum and mean of double column `x` by group `g` of `table`, as the
/// printer writes them, run through a crescendo session; each group's
/// cells equal those of the sums of the shortest texts. `scaled`: whether
/// the printed query runs as it is, without the exact sums of its
/// fallback (`crescendo_sql::print::exact_fallback`); otherwise it stops
/// with `numeric_value_out_of_range`.
fn printed_sums(
    cluster: &Cluster,
    client: &mut postgres::Client,
    table: &str,
    scaled: bool,
) -> Vec<Vec<Option<String>>> {
    use crescendo_data::{AggFn, Aggregate, ColType};
    use crescendo_sql::print::{prefix, RowOrder};
    use crescendo_sql::{Read, SrcColumn};
    let cols = vec![
        SrcColumn {
            name: "g".into(),
            ty: ColType::Text,
            read: Read::Text,
        },
        SrcColumn {
            name: "x".into(),
            ty: ColType::Number,
            read: Read::Float,
        },
    ];
    let agg = |name: &str, func| Aggregate {
        name: name.into(),
        func,
        column: Some(1),
    };
    let q = prefix(
        &crescendo_sql::From::Table {
            schema: None,
            name: table.into(),
        },
        &RowOrder {
            columns: vec![("line".into(), false)],
        },
        &cols,
        &[],
        Some((&[0], &[agg("s", AggFn::Sum), agg("m", AggFn::Mean)])),
    );
    assert!(q.sql.contains("::bigint ELSE"), "{}", q.sql);
    let direct = client.query(&q.sql, &[]);
    match &direct {
        Ok(_) => assert!(scaled, "{table}: the scaled sums ran"),
        Err(e) => assert!(
            !scaled && e.code() == Some(&postgres::error::SqlState::NUMERIC_VALUE_OUT_OF_RANGE),
            "{table}: {e}"
        ),
    }
    let timeout = Duration::from_secs(120);
    let mut session =
        crescendo_sql::client::Session::open(&cluster.conn(), timeout).expect("open a session");
    let (printed, _) = session
        .rows(&q.sql, &q.params, timeout)
        .expect("the printed query runs");
    session.close();
    let cell = |r: &postgres::Row, i: usize| r.get::<_, Option<String>>(i);
    let reference: Vec<Vec<Option<String>>> = client
        .query(
            &format!(
                "SELECT g, sum(x::text::numeric)::text, sum(x::text::numeric)::text, count(x)::text \
                 FROM {table} GROUP BY g ORDER BY min(line)"
            ),
            &[],
        )
        .expect("the reference query runs")
        .iter()
        .map(|r| (0..4).map(|i| cell(r, i)).collect())
        .collect();
    assert_eq!(printed.len(), reference.len());
    for (p, r) in printed.iter().zip(&reference) {
        let norm = |c: &Option<String>| c.as_deref().map(trimmed).map(str::to_owned);
        let (p, r): (Vec<_>, Vec<_>) = (p.iter().map(norm).collect(), r.iter().map(norm).collect());
        assert_eq!(p, r, "{table}: group {:?}", r[0]);
    }
    printed
}

/// Ten million rows generated inside the server aggregate there; the bytes
/// received follow the number of groups, not of rows.
fn scale(cluster: &Cluster) {
    let mut client = cluster.client();
    let t0 = Instant::now();
    client
        .batch_execute(
            "DROP TABLE IF EXISTS big; CREATE UNLOGGED TABLE big (line bigint, grp text, amount numeric);
             INSERT INTO big SELECT g, 'group ' || (g % 50), (g % 1000) / 10.0 FROM generate_series(1, 10000000) g;
             ANALYZE big;",
        )
        .expect("generate 10 million rows");
    let generated = t0.elapsed();
    let dir = root().join("target").join("pgscale");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("mkdir");
    let story = r#"story "Ten million rows"
data ledger from table "big" via CRESCENDO_TEST_DB in order of line
view all_rows = ledger
  | by grp: amount = sum(amount), n = count()
view tenth = ledger
  | keep line <= 1000000
  | by grp: amount = sum(amount), n = count()
value rows_per_group = first(all_rows.n)
frame "Totals" {
  bars all_rows: category grp, value amount
}
"#;
    std::fs::write(dir.join("story.cresc"), story).expect("write");
    let conn = cluster.conn();
    let t1 = Instant::now();
    let out = run(
        &dir,
        &["check", "--explain-sql", "--format", "json", "story.cresc"],
        &[("CRESCENDO_TEST_DB", conn.as_str())],
    );
    let took = t1.elapsed();
    assert!(out.status.success(), "{}", text(&out));
    let report: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json report");
    let sql = report["sql"].as_array().expect("sql list");
    assert_eq!(sql.len(), 2, "{report}");
    let figure = |i: usize, k: &str| sql[i][k].as_u64().expect("number");
    assert_eq!(figure(0, "rows"), 50);
    assert_eq!(figure(1, "rows"), 50);
    let (all, tenth) = (figure(0, "bytes"), figure(1, "bytes"));
    println!(
        "scale: 10,000,000 rows generated in {:.1} s; both views computed in {:.1} s; \
         received {all} bytes for 10,000,000 rows and {tenth} bytes for 1,000,000 rows (50 groups each)",
        generated.as_secs_f64(),
        took.as_secs_f64()
    );
    // Ten times the rows, the same groups: about the same bytes (a few more
    // digits per sum and count), and far below one byte per row.
    assert!(all < 2 * tenth, "{all} vs {tenth}");
    assert!(all < 50 * 64, "{all} bytes for 50 groups");
    // Every group holds 200,000 of the 10 million rows.
    assert_eq!(report["values"]["rows_per_group"], "200,000", "{report}");
}

/// A missing environment variable is a located error (no server needed).
#[test]
fn an_unset_connection_variable_is_a_located_error() {
    let dir = common::scratch("db-unset-var");
    std::fs::write(
        dir.join("story.cresc"),
        "story \"x\"\ndata d from table \"t\" via CRESCENDO_SURELY_UNSET_DB\nview v = d\n  | by k: n = count()\nframe \"f\" {\n  bars v: category k, value n\n}\n",
    )
    .expect("write");
    let out = run(&dir, &["check", "story.cresc"], &[]);
    let t = text(&out);
    assert_eq!(out.status.code(), Some(1), "{t}");
    assert!(
        t.contains("the environment variable `CRESCENDO_SURELY_UNSET_DB` is not set"),
        "{t}"
    );
    assert!(t.contains("story.cresc:2:27"), "{t}");
    // `--connection d=OTHER` names another variable, and the message says so.
    let out = run(
        &dir,
        &[
            "check",
            "story.cresc",
            "--connection",
            "d=CRESCENDO_OTHER_UNSET_DB",
        ],
        &[],
    );
    let t = text(&out);
    assert!(t.contains("`CRESCENDO_OTHER_UNSET_DB` is not set"), "{t}");
    assert!(t.contains("--connection d=CRESCENDO_OTHER_UNSET_DB"), "{t}");
    // A name that is no database item of the story.
    let out = run(
        &dir,
        &[
            "check",
            "story.cresc",
            "--connection",
            "e=CRESCENDO_OTHER_UNSET_DB",
        ],
        &[],
    );
    let t = text(&out);
    assert!(
        t.contains("`--connection e=...` names no database data item of this story"),
        "{t}"
    );
    assert!(t.contains("did you mean `d`?"), "{t}");
    // A connection string where a variable name belongs is refused without
    // being echoed.
    let out = run(
        &dir,
        &[
            "check",
            "story.cresc",
            "--connection",
            "d=postgresql://u:pw=secret@h/db",
        ],
        &[],
    );
    let t = text(&out);
    assert!(!out.status.success());
    assert!(!t.contains("secret"), "{t}");
}

/// Start `n` clusters, or say why not (skipped unless required).
fn start_or_skip(folders: &[&str]) -> Option<Vec<Cluster>> {
    let mut out = Vec::new();
    for f in folders {
        match start_in(f) {
            Ok(c) => out.push(c),
            Err(why) => {
                if std::env::var("CRESCENDO_REQUIRE_DB").as_deref() == Ok("1") {
                    panic!("CRESCENDO_REQUIRE_DB=1 but the test cluster could not start: {why}");
                }
                println!("skipped: {why}");
                return None;
            }
        }
    }
    Some(out)
}

/// One table spread over two servers: a coordinator whose partitioned
/// table `sales` has two foreign partitions (postgres_fdw), each the table
/// of a shard cluster. With partitionwise aggregation on, a view grouped by
/// the partition key is aggregated on the shards (the coordinator's
/// EXPLAIN VERBOSE shows `Foreign Scan` of an `Aggregate` with the GROUP BY
/// in its remote SQL), and the deck equals the one built from the same
/// rows as a CSV file.
///
/// Outside check: PostgreSQL's own planner and aggregates on the shards
/// (PostgreSQL 15, postgres_fdw) against the local engine on the CSV file.
#[test]
fn a_table_over_two_shards_is_aggregated_on_the_shards() {
    let Some(clusters) = start_or_skip(&["pgshard-coord", "pgshard-a", "pgshard-b"]) else {
        return;
    };
    let (coord, shards) = (&clusters[0], &clusters[1..]);
    let t0 = Instant::now();
    // Each shard generates its own half of the million rows server-side.
    let regions = [["north", "east"], ["south", "west"]];
    for (shard, keep) in shards.iter().zip(regions) {
        shard
            .client()
            .batch_execute(&format!(
                "CREATE UNLOGGED TABLE sales_part (line bigint, region text, day date, amount numeric);
                 INSERT INTO sales_part
                   SELECT * FROM (
                     SELECT g, (ARRAY['north','east','south','west'])[g % 4 + 1],
                            date '2025-01-01' + (g % 365), ((g * 37) % 1000) / 10.0
                     FROM generate_series(1, 1000000) g) r(line, region, day, amount)
                   WHERE region IN ('{}', '{}');
                 ANALYZE sales_part;",
                keep[0], keep[1]
            ))
            .expect("generate the shard's rows");
    }
    let mut client = coord.client();
    let mut setup = String::from(
        "CREATE EXTENSION postgres_fdw;
         CREATE TABLE sales (line bigint, region text, day date, amount numeric) PARTITION BY LIST (region);
         ALTER DATABASE postgres SET enable_partitionwise_aggregate = on;",
    );
    for (i, (shard, keep)) in shards.iter().zip(regions).enumerate() {
        setup.push_str(&format!(
            "CREATE SERVER shard_{i} FOREIGN DATA WRAPPER postgres_fdw
               OPTIONS (host '127.0.0.1', port '{port}', dbname 'postgres');
             CREATE USER MAPPING FOR postgres SERVER shard_{i}
               OPTIONS (user 'postgres', password '{PASSWORD}');
             CREATE FOREIGN TABLE sales_{i} PARTITION OF sales FOR VALUES IN ('{a}', '{b}')
               SERVER shard_{i} OPTIONS (table_name 'sales_part');",
            port = shard.port,
            a = keep[0],
            b = keep[1],
        ));
    }
    setup.push_str("ANALYZE sales;");
    client.batch_execute(&setup).expect("attach the shards");
    let rows: i64 = client
        .query_one("SELECT count(*) FROM sales", &[])
        .expect("count")
        .get(0);
    assert_eq!(rows, 1_000_000);
    println!(
        "shards: 1,000,000 rows generated and attached in {:.1} s",
        t0.elapsed().as_secs_f64()
    );

    let dir = root().join("target").join("pgshards");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("mkdir");
    // The same rows, in line order, as a CSV file.
    {
        use std::io::Read;
        let mut csv = Vec::new();
        client
            .copy_out("COPY (SELECT line, region, day, amount FROM sales ORDER BY line) TO STDOUT (FORMAT csv, HEADER true)")
            .expect("copy out")
            .read_to_end(&mut csv)
            .expect("read the copy");
        std::fs::write(dir.join("sales.csv"), csv).expect("write csv");
    }
    let story = |from: &str| {
        format!(
            r#"story "Ticket sales by region"
source "Invented box-office ledger, one row per ticket"
conclusion "Every region sold its share"
data sales from {from} {{
  line: number
  region: text
  day: date
  amount: number
}}
view by_region = sales
  | by region: takings = sum(amount), tickets = count()
value north = sum(by_region.tickets where region = "north")
claim north > 200000 "The north sold over 200,000 tickets"
frame "Takings by region" {{
  bars by_region: category region, value takings
  y title "Takings"
}}
"#
        )
    };
    std::fs::write(dir.join("csv.cresc"), story("\"sales.csv\"")).expect("write");
    std::fs::write(
        dir.join("db.cresc"),
        story("table \"sales\" via CRESCENDO_TEST_DB in order of line"),
    )
    .expect("write");
    let conn = coord.conn();
    let env = [("CRESCENDO_TEST_DB", conn.as_str())];
    let t1 = Instant::now();
    let a = run(
        &dir,
        &["build", "csv.cresc", "--no-cache", "--out", "deck-csv"],
        &[],
    );
    assert!(a.status.success(), "from CSV: {}", text_of(&a));
    let csv_took = t1.elapsed();
    let t2 = Instant::now();
    let b = run(
        &dir,
        &["build", "db.cresc", "--no-cache", "--out", "deck-db"],
        &env,
    );
    assert!(b.status.success(), "from the coordinator: {}", text_of(&b));
    let db_took = t2.elapsed();
    let (fa, fb) = (
        read_dir_files(&dir.join("deck-csv")),
        read_dir_files(&dir.join("deck-db")),
    );
    assert_eq!(
        fa.iter().map(|(n, _)| n).collect::<Vec<_>>(),
        fb.iter().map(|(n, _)| n).collect::<Vec<_>>()
    );
    for ((n, x), (_, y)) in fa.iter().zip(&fb) {
        assert!(x == y, "`{n}` differs between the CSV and the sharded deck");
    }
    println!(
        "shards: deck from CSV in {:.1} s, from the coordinator in {:.1} s",
        csv_took.as_secs_f64(),
        db_took.as_secs_f64()
    );

    // `check --explain-sql` shows the aggregation sent to both shards.
    let out = run(&dir, &["check", "--explain-sql", "db.cresc"], &env);
    let said = text_of(&out);
    assert!(out.status.success(), "{said}");
    println!("{said}");
    assert!(said.contains("-- view by_region (data sales)"), "{said}");
    assert!(said.contains("sent on to 2 remote scans"), "{said}");
    let remote: Vec<&str> = said.lines().filter(|l| l.contains("Remote SQL:")).collect();
    assert_eq!(remote.len(), 2, "{said}");
    for r in &remote {
        assert!(
            r.contains("sum(amount)") && r.contains("count(") && r.contains("GROUP BY"),
            "the aggregate did not run on the shard: {r}"
        );
    }
    assert!(
        said.contains("Relations: Aggregate on (public.sales_0"),
        "{said}"
    );
    assert!(
        said.contains("Relations: Aggregate on (public.sales_1"),
        "{said}"
    );
    // The JSON report carries the plan too.
    let out = run(
        &dir,
        &["check", "--explain-sql", "--format", "json", "db.cresc"],
        &env,
    );
    let report: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json report");
    let plan = report["sql"][0]["plan"].as_array().expect("a plan");
    assert!(
        plan.iter()
            .filter(|l| l.as_str().is_some_and(|l| l.contains("Remote SQL:")))
            .count()
            == 2,
        "{report}"
    );
    // Without --explain-sql nothing asks for a plan.
    let out = run(&dir, &["check", "--format", "json", "db.cresc"], &env);
    assert!(out.status.success(), "{}", text_of(&out));
    let _ = std::fs::remove_dir_all(&dir);
}
