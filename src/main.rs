//! The `juncture` command: serve the web application, load the demo lab,
//! convert between temperature and sensor signal, and administer the
//! laboratory from a shell.

mod admin;
mod convert;
mod validate;

use std::net::SocketAddr;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Args, Parser, Subcommand};
use juncture::config::{DEFAULT_BIND, DEFAULT_DATABASE, HttpConfig, ServeConfig};
use juncture::{demo, store, web};

#[derive(Debug, Parser)]
#[command(
    name = "juncture",
    version,
    about = "Temperature-calibration laboratory service"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Args)]
struct DatabaseArg {
    /// SQLite database file (created when missing).
    #[arg(long, global = true, env = "JUNCTURE_DATABASE", default_value = DEFAULT_DATABASE)]
    database: PathBuf,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Run the web service.
    Serve {
        #[command(flatten)]
        db: DatabaseArg,
        /// Address to listen on (port 0 picks a free port).
        #[arg(long, env = "JUNCTURE_BIND", default_value = DEFAULT_BIND)]
        bind: SocketAddr,
        /// Load the invented demonstration laboratory first, if the database is empty.
        #[arg(long)]
        demo: bool,
        /// Seconds a request may take before it is answered with 408.
        #[arg(long, default_value_t = 30)]
        request_timeout_s: u64,
        /// Largest accepted request body, in bytes.
        #[arg(long, default_value_t = 8 * 1024 * 1024)]
        body_limit_bytes: usize,
        /// Largest logger file accepted by the streaming upload, in bytes.
        #[arg(long, default_value_t = 256 * 1024 * 1024)]
        upload_limit_bytes: u64,
    },
    /// Load the invented demonstration laboratory into an empty database.
    Demo {
        #[command(flatten)]
        db: DatabaseArg,
    },
    /// Fill a demo database with invented certificates for scale measurements.
    Generate {
        #[command(flatten)]
        db: DatabaseArg,
        /// Certificates to issue (at least --instruments).
        #[arg(long)]
        certificates: usize,
        /// Instruments to register (at least 3).
        #[arg(long)]
        instruments: usize,
        /// Seed of the invented data (the same seed gives the same records).
        #[arg(long, default_value_t = 1)]
        seed: u64,
    },
    /// Reference conversions: thermocouples, PRTs, ITS-90, tolerance classes.
    Convert(convert::ConvertArgs),
    /// Run the known-answer checks of the numerical core and print a dated report.
    Validate {
        /// Print the report as JSON.
        #[arg(long)]
        json: bool,
        /// List every check, not only failures.
        #[arg(long)]
        verbose: bool,
    },
    /// Add users.
    User {
        #[command(flatten)]
        db: DatabaseArg,
        #[command(subcommand)]
        action: admin::UserAction,
    },
    /// Create and revoke API tokens.
    Token {
        #[command(flatten)]
        db: DatabaseArg,
        #[command(subcommand)]
        action: admin::TokenAction,
    },
    /// Check the audit trail.
    Audit {
        #[command(flatten)]
        db: DatabaseArg,
        #[command(subcommand)]
        action: admin::AuditAction,
    },
    /// Write a consistent copy of the database (safe while the service runs),
    /// then check the copy's integrity and audit chain.
    Backup {
        #[command(flatten)]
        db: DatabaseArg,
        /// The file to write; it must not exist yet.
        target: PathBuf,
    },
    /// Show or change the laboratory's identity and settings.
    Lab {
        #[command(subcommand)]
        action: LabAction,
    },
}

#[derive(Debug, Subcommand)]
enum LabAction {
    /// Print the laboratory's identity and settings.
    Show {
        #[command(flatten)]
        db: DatabaseArg,
    },
    /// Set the laboratory's identity (fields not given keep their value).
    Set {
        #[command(flatten)]
        db: DatabaseArg,
        /// Legal name, as printed on certificates.
        #[arg(long)]
        name: Option<String>,
        /// Postal address; use "\n" between lines.
        #[arg(long)]
        address: Option<String>,
        /// Accreditation body and number.
        #[arg(long)]
        accreditation: Option<String>,
        /// Contact e-mail.
        #[arg(long)]
        email: Option<String>,
        /// Contact telephone.
        #[arg(long)]
        phone: Option<String>,
        /// Certificate number pattern, with {year} and {seq:N}.
        #[arg(long)]
        certificate_pattern: Option<String>,
        /// Default coverage probability, between 0 and 1 (e.g. 0.9545).
        #[arg(long)]
        coverage_probability: Option<f64>,
    },
}

fn main() -> ExitCode {
    tracing_subscriber::fmt()
        .with_env_filter(
            tracing_subscriber::EnvFilter::try_from_env("JUNCTURE_LOG")
                .unwrap_or_else(|_| tracing_subscriber::EnvFilter::new("info,sqlx=warn")),
        )
        .with_writer(std::io::stderr)
        .init();
    let cli = Cli::parse();
    let runtime = match tokio::runtime::Runtime::new() {
        Ok(rt) => rt,
        Err(e) => {
            eprintln!("error: cannot start the async runtime: {e}");
            return ExitCode::FAILURE;
        }
    };
    match runtime.block_on(run(cli)) {
        Ok(()) => ExitCode::SUCCESS,
        Err(message) => {
            eprintln!("error: {message}");
            ExitCode::FAILURE
        }
    }
}

/// Opens and migrates the database, turning failures into one sentence.
async fn open(path: &std::path::Path) -> Result<sqlx::SqlitePool, String> {
    let pool = store::connect(path).await.map_err(|e| e.to_string())?;
    store::migrate(&pool).await.map_err(|e| e.to_string())?;
    Ok(pool)
}

async fn run(cli: Cli) -> Result<(), String> {
    match cli.command {
        Command::Serve {
            db,
            bind,
            demo,
            request_timeout_s,
            body_limit_bytes,
            upload_limit_bytes,
        } => {
            let config = ServeConfig {
                database: db.database,
                bind,
                http: HttpConfig {
                    request_timeout: std::time::Duration::from_secs(request_timeout_s),
                    body_limit_bytes,
                    upload_limit_bytes,
                },
            };
            serve(config, demo).await
        }
        Command::Demo { db } => {
            let pool = open(&db.database).await?;
            demo::load(&pool).await.map_err(|e| e.to_string())?;
            println!(
                "loaded the demonstration laboratory into {}",
                db.database.display()
            );
            pool.close().await;
            Ok(())
        }
        Command::Generate {
            db,
            certificates,
            instruments,
            seed,
        } => {
            let plan = juncture::generate::Plan {
                certificates,
                instruments,
                seed,
            };
            plan.check().map_err(|e| e.to_string())?;
            let pool = open(&db.database).await?;
            let started = std::time::Instant::now();
            let result = juncture::generate::generate(&pool, plan).await;
            pool.close().await;
            let s = result.map_err(|e| e.to_string())?;
            println!(
                "generated {} customers, {} instruments and {} certificates ({} from evaluated template runs) in {:.1} s into {}",
                s.customers,
                s.instruments,
                s.certificates,
                s.templates,
                started.elapsed().as_secs_f64(),
                db.database.display()
            );
            Ok(())
        }
        Command::Convert(args) => convert::run(args),
        Command::Validate { json, verbose } => {
            if validate::run(json, verbose)? {
                Ok(())
            } else {
                Err("software validation failed: see the checks marked FAIL above".to_owned())
            }
        }
        Command::User { db, action } => {
            let pool = open(&db.database).await?;
            let result = admin::user(&pool, action).await;
            pool.close().await;
            result
        }
        Command::Token { db, action } => {
            let pool = open(&db.database).await?;
            let result = admin::token(&pool, action).await;
            pool.close().await;
            result
        }
        Command::Audit { db, action } => {
            let pool = open(&db.database).await?;
            let result = admin::audit_cmd(&pool, action).await;
            pool.close().await;
            result
        }
        Command::Backup { db, target } => admin::backup(&db.database, &target).await,
        Command::Lab { action } => lab(action).await,
    }
}

async fn serve(config: ServeConfig, with_demo: bool) -> Result<(), String> {
    let pool = open(&config.database).await?;
    if with_demo {
        match demo::load(&pool).await {
            Ok(()) => tracing::info!("loaded the demonstration laboratory"),
            Err(demo::DemoError::NotEmpty(name)) => {
                tracing::info!(lab = %name, "database already holds a laboratory; demo not loaded");
            }
            Err(e) => return Err(e.to_string()),
        }
    }
    let listener = tokio::net::TcpListener::bind(config.bind)
        .await
        .map_err(|e| format!("cannot listen on {}: {e}", config.bind))?;
    let address = listener
        .local_addr()
        .map_err(|e| format!("cannot read the listening address: {e}"))?;
    // Printed on stdout so that scripts and tests can find the port when
    // `--bind 127.0.0.1:0` was given.
    println!("juncture listening on http://{address}");
    tracing::info!(database = %config.database.display(), %address, "serving");
    let state = web::AppState::new(pool, config.http);
    web::serve(listener, state)
        .await
        .map_err(|e| format!("the server stopped with an error: {e}"))
}

async fn lab(action: LabAction) -> Result<(), String> {
    match action {
        LabAction::Show { db } => {
            let pool = open(&db.database).await?;
            let mut conn = pool.acquire().await.map_err(|e| e.to_string())?;
            match store::lab::get(&mut conn)
                .await
                .map_err(|e| e.to_string())?
            {
                Some(lab) => {
                    println!("name:                 {}", lab.name);
                    println!("address:              {}", lab.address.replace('\n', ", "));
                    println!("accreditation:        {}", lab.accreditation);
                    println!("e-mail:               {}", lab.contact_email);
                    println!("telephone:            {}", lab.contact_phone);
                    println!("certificate pattern:  {}", lab.certificate_number_pattern);
                    println!("coverage probability: {}", lab.coverage_probability);
                    println!("due warning:          {} days", lab.due_warning_days);
                    println!("updated:              {}", lab.updated_at);
                }
                None => println!("no laboratory is set up in {}", db.database.display()),
            }
            Ok(())
        }
        LabAction::Set {
            db,
            name,
            address,
            accreditation,
            email,
            phone,
            certificate_pattern,
            coverage_probability,
        } => {
            let pool = open(&db.database).await?;
            let mut tx = store::begin_write(&pool).await.map_err(|e| e.to_string())?;
            let current = store::lab::get(&mut tx).await.map_err(|e| e.to_string())?;
            let before = current
                .as_ref()
                .and_then(|lab| serde_json::to_value(lab).ok());
            let mut lab = match current {
                Some(lab) => lab,
                None => {
                    let (Some(name), Some(address)) = (name.clone(), address.clone()) else {
                        return Err(
                            "no laboratory is set up yet: give at least --name and --address"
                                .to_owned(),
                        );
                    };
                    store::lab::LabSettings {
                        name,
                        address,
                        accreditation: String::new(),
                        contact_email: String::new(),
                        contact_phone: String::new(),
                        certificate_number_pattern: "C{year}-{seq:5}".to_owned(),
                        coverage_probability: 0.9545,
                        due_warning_days: 30,
                        characterisation_interval_days: 365,
                        updated_at: String::new(),
                    }
                }
            };
            if let Some(v) = name {
                if v.trim().is_empty() {
                    return Err("--name must not be empty".to_owned());
                }
                lab.name = v;
            }
            if let Some(v) = address {
                lab.address = v.replace("\\n", "\n");
            }
            if let Some(v) = accreditation {
                lab.accreditation = v;
            }
            if let Some(v) = email {
                lab.contact_email = v;
            }
            if let Some(v) = phone {
                lab.contact_phone = v;
            }
            if let Some(v) = certificate_pattern {
                if !v.contains("{seq") {
                    return Err(format!(
                        "--certificate-pattern {v:?} must contain {{seq:N}} so that numbers are unique"
                    ));
                }
                lab.certificate_number_pattern = v;
            }
            if let Some(p) = coverage_probability {
                if !(p > 0.0 && p < 1.0) {
                    return Err(format!(
                        "--coverage-probability must lie between 0 and 1 (e.g. 0.9545); got {p}"
                    ));
                }
                lab.coverage_probability = p;
            }
            store::lab::put(&mut tx, &lab)
                .await
                .map_err(|e| e.to_string())?;
            let after = serde_json::to_value(&lab).map_err(|e| e.to_string())?;
            store::audit::append(
                &mut tx,
                &store::audit::NewEvent {
                    actor: "command line",
                    action: if before.is_some() { "update" } else { "create" },
                    entity: "lab_settings",
                    entity_id: "1",
                    before: before.as_ref(),
                    after: Some(&after),
                },
            )
            .await
            .map_err(|e| e.to_string())?;
            tx.commit().await.map_err(|e| e.to_string())?;
            println!("laboratory settings saved in {}", db.database.display());
            Ok(())
        }
    }
}
