//! `fluxbound health`: exit 0 when `/healthz` answers 200, 1 with one line
//! otherwise (a container runtime reads 1 as unhealthy).

use super::{TempPath, fluxbound, stderr_of, stdout_of};
use std::io::{BufRead, BufReader, Read, Write};
use std::net::TcpListener;
use std::process::{Child, Command, Stdio};
use std::sync::mpsc;
use std::time::Duration;

/// A `fluxbound serve` on a free port, killed when dropped.
struct Served {
    child: Child,
    port: u16,
    _data: TempPath,
}

impl Drop for Served {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

fn serve() -> Served {
    let data = TempPath::unique("health-data");
    let mut child = Command::new(env!("CARGO_BIN_EXE_fluxbound"))
        .args(["serve", "--listen", "127.0.0.1:0", "--data-dir"])
        .arg(&*data)
        .env_remove("DATABASE_URL")
        .env("RUST_LOG", "info")
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the server starts");
    let stderr = child.stderr.take().expect("stderr is piped");
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        for line in BufReader::new(stderr).lines().map_while(Result::ok) {
            if let Some(port) = line.split("listening on http://127.0.0.1:").nth(1) {
                let _ = tx.send(port.trim().parse::<u16>().ok());
            }
        }
    });
    let port = rx.recv_timeout(Duration::from_secs(30)).ok().flatten().expect("the server logs its port");
    Served { child, port, _data: data }
}

#[test]
fn health_exits_0_while_the_server_answers_and_1_in_one_line_once_it_is_gone() {
    let mut served = serve();
    let url = format!("http://127.0.0.1:{}", served.port);
    let up = fluxbound(&["health", "--url", &url], None);
    assert_eq!(up.status.code(), Some(0), "{}", stderr_of(&up));
    assert!(stdout_of(&up).starts_with(&format!("ok: {url}/healthz answered 200")), "{}", stdout_of(&up));
    served.child.kill().expect("stop the server");
    served.child.wait().expect("the server ends");
    let down = fluxbound(&["health", "--url", &url, "--timeout-s", "2"], None);
    assert_eq!(down.status.code(), Some(1));
    let err = stderr_of(&down);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.contains("cannot reach"), "{err}");
}

#[test]
fn health_exits_1_when_the_server_answers_anything_but_200() {
    let listener = TcpListener::bind("127.0.0.1:0").unwrap();
    let port = listener.local_addr().unwrap().port();
    std::thread::spawn(move || {
        if let Ok((mut s, _)) = listener.accept() {
            let mut head = [0_u8; 1024];
            let _ = s.read(&mut head);
            let _ = s.write_all(b"HTTP/1.1 503 Service Unavailable\r\nContent-Length: 0\r\n\r\n");
        }
    });
    let out = fluxbound(&["health", "--url", &format!("http://127.0.0.1:{port}")], None);
    assert_eq!(out.status.code(), Some(1));
    assert!(stderr_of(&out).contains("answered 'HTTP/1.1 503 Service Unavailable'"), "{}", stderr_of(&out));
}

#[test]
fn health_refuses_a_url_it_cannot_probe_naming_the_flag() {
    let out = fluxbound(&["health", "--url", "https://127.0.0.1:8080"], None);
    assert_eq!(out.status.code(), Some(1));
    assert!(stderr_of(&out).contains("--url: 'https://127.0.0.1:8080' must start with http://"), "{}", stderr_of(&out));
}
