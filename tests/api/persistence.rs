//! Durability: stop the server, start it again on the same data.

use crate::helpers::*;
use fluxbound::service::{Limits, Role};
use serde_json::{Value, json};

#[tokio::test]
async fn everything_stored_is_there_after_a_restart() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &small_site("durable")).await;
    assert_eq!(app.put(&format!("/v1/sites/{id}"), &key, &small_site("durable v2"), Some("\"1\"")).await.status(), 200);
    let a: Value = app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({})).await.json().await.unwrap();
    let db = app.stop().await;

    let again = spawn_app_with(db, Limits { rate_per_key: 0, ..Limits::default() }).await;
    let site: Value = again.get(&format!("/v1/sites/{id}"), &key).await.json().await.unwrap();
    assert_eq!(site["name"], "durable v2");
    assert_eq!(site["latest_revision"], 2);
    let r1: Value = again.get(&format!("/v1/sites/{id}/revisions/1"), &key).await.json().await.unwrap();
    assert_eq!(r1["name"], "durable");
    let read: Value =
        again.get(&format!("/v1/assessments/{}", a["id"].as_str().unwrap()), &key).await.json().await.unwrap();
    assert_eq!(read, a);
}

#[tokio::test]
async fn health_and_readiness_answer() {
    let app = spawn_app().await;
    assert_eq!(app.get("/healthz", "").await.status(), 200);
    let ready = app.get("/readyz", "").await;
    assert_eq!(ready.status(), 200);
    let docs = app.get("/docs/", "").await;
    assert_eq!(docs.status(), 200);
    let html = docs.text().await.unwrap();
    assert!(!html.contains("https://"), "the docs page loads nothing from the network");
}

#[test]
fn both_migration_trees_hold_the_same_versions_and_every_file_is_embedded() {
    use fluxbound::store::{MIGRATIONS_POSTGRES, MIGRATIONS_SQLITE};
    let versions = |m: &[(i64, &str, &str)]| m.iter().map(|(v, n, _)| format!("{v:04}_{n}.sql")).collect::<Vec<_>>();
    assert_eq!(versions(MIGRATIONS_SQLITE), versions(MIGRATIONS_POSTGRES));
    for dir in ["sqlite", "postgres"] {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("migrations").join(dir);
        let mut on_disk: Vec<String> = std::fs::read_dir(path)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .filter(|n| n.ends_with(".sql"))
            .collect();
        on_disk.sort();
        assert_eq!(on_disk, versions(MIGRATIONS_SQLITE), "migrations/{dir} and the embedded list differ");
    }
}

/// Longest wait for the server to log its port, and then to exit after
/// SIGTERM: far above the usual fraction of a second, so only a hang trips
/// it (the child is then killed and the test fails instead of blocking CI).
const SIGTERM_STEP_TIMEOUT: std::time::Duration = std::time::Duration::from_secs(60);

#[test]
fn the_server_exits_zero_on_sigterm_after_logging_its_real_port() {
    use std::io::{BufRead, BufReader};
    use std::sync::mpsc::RecvTimeoutError;
    let dir = TempDir::unique("fluxbound-sigterm");
    let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_fluxbound"))
        .args(["serve", "--listen", "127.0.0.1:0", "--data-dir"])
        .arg(dir.path())
        .env_remove("DATABASE_URL")
        .stderr(std::process::Stdio::piped())
        .spawn()
        .expect("start the server");
    // Read the log on a thread (also so the server never writes into a
    // closed pipe); lines arrive here with a timeout.
    let stderr = BufReader::new(child.stderr.take().unwrap());
    let (tx, rx) = std::sync::mpsc::channel::<String>();
    std::thread::spawn(move || {
        for line in stderr.lines().map_while(Result::ok) {
            if tx.send(line).is_err() {
                break;
            }
        }
    });
    let mut log = Vec::new();
    let deadline = std::time::Instant::now() + SIGTERM_STEP_TIMEOUT;
    let port = loop {
        match rx.recv_timeout(deadline.saturating_duration_since(std::time::Instant::now())) {
            Ok(line) => {
                let found = line.find("listening on http://127.0.0.1:").and_then(|at| {
                    let rest = &line[at + "listening on http://127.0.0.1:".len()..];
                    rest.split(|c: char| !c.is_ascii_digit()).next().and_then(|p| p.parse::<u16>().ok())
                });
                log.push(line);
                if let Some(port) = found {
                    break port;
                }
            }
            Err(e) => {
                let _ = child.kill();
                let _ = child.wait();
                panic!("no 'listening on' line with the real port ({e:?}):\n{}", log.join("\n"));
            }
        }
    };
    assert_ne!(port, 0);
    std::net::TcpStream::connect(("127.0.0.1", port)).expect("the port is open");
    let killed = std::process::Command::new("kill").args(["-TERM", &child.id().to_string()]).status().unwrap();
    assert!(killed.success());
    let deadline = std::time::Instant::now() + SIGTERM_STEP_TIMEOUT;
    let status = loop {
        if let Some(status) = child.try_wait().unwrap() {
            break status;
        }
        if std::time::Instant::now() >= deadline {
            let _ = child.kill();
            let _ = child.wait();
            panic!("the server did not exit within {SIGTERM_STEP_TIMEOUT:?} of SIGTERM:\n{}", log.join("\n"));
        }
        std::thread::sleep(std::time::Duration::from_millis(20));
    };
    // The child has exited, so its stderr ends; the timeout only guards
    // against a grandchild holding the pipe.
    loop {
        match rx.recv_timeout(SIGTERM_STEP_TIMEOUT) {
            Ok(line) => log.push(line),
            Err(RecvTimeoutError::Disconnected) => break,
            Err(RecvTimeoutError::Timeout) => panic!("the server's log did not end after it exited"),
        }
    }
    let log = log.join("\n");
    assert_eq!(status.code(), Some(0), "{status:?}\n{log}");
    assert!(log.contains("draining"), "{log}");
}
