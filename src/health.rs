//! `fluxbound health`: one `GET /healthz` over a plain TCP connection, for
//! container health checks in an image that has no curl. HTTP/1.1 written
//! by hand: one request with `Connection: close`, the status line read
//! back, nothing else (no TLS, no redirects, no body).

use std::io::{self, Read, Write};
use std::net::{SocketAddr, TcpStream, ToSocketAddrs};
use std::time::{Duration, Instant};

/// Where `serve` listens by default.
pub const DEFAULT_ADDR: &str = "127.0.0.1:8080";

/// The most of an answer read while looking for its status line; a status
/// line is a few dozen bytes.
const MAX_STATUS_LINE_BYTES: usize = 8 * 1024;

#[derive(Debug, thiserror::Error)]
pub enum HealthError {
    #[error("--url: {0}")]
    Url(String),
    #[error("cannot reach {target}: {source}")]
    Connect { target: String, source: io::Error },
    #[error("no answer from {target}: {source}")]
    Exchange { target: String, source: io::Error },
    #[error("{target} answered '{status_line}'")]
    Unhealthy { target: String, status_line: String },
}

/// Where to send the probe.
#[derive(Debug, PartialEq, Eq)]
pub struct Target {
    /// `host:port` as given (the `Host` header).
    authority: String,
    host: String,
    port: u16,
    /// The probed path: the URL's path with `/healthz` appended.
    path: String,
}

impl Target {
    /// Parses `http://host[:port][/base]` (port 80 by default).
    pub fn parse(url: &str) -> Result<Target, HealthError> {
        let bad = |why: &str| HealthError::Url(format!("'{url}' {why}"));
        let rest = url
            .get(..7)
            .filter(|scheme| scheme.eq_ignore_ascii_case("http://"))
            .map(|_| &url[7..])
            .ok_or_else(|| bad("must start with http:// (TLS is not spoken here)"))?;
        if rest.contains(['?', '#', '@']) || rest.chars().any(|c| c.is_whitespace() || c.is_control()) {
            return Err(bad("must be http://host[:port][/path], without user, query or fragment"));
        }
        let (authority, base) = rest.split_at(rest.find('/').unwrap_or(rest.len()));
        let (host, port) = split_host_port(authority).ok_or_else(|| bad("has no valid host[:port]"))?;
        let path = format!("{}/healthz", base.trim_end_matches('/'));
        Ok(Target { authority: authority.to_string(), host, port, path })
    }

    /// The target of a server listening on `listen` (`FLUXBOUND_LISTEN`):
    /// an unspecified address (`0.0.0.0`, `[::]`) is probed on loopback.
    pub fn of_listen(listen: &str) -> Result<Target, HealthError> {
        let authority = match listen.parse::<SocketAddr>() {
            Ok(SocketAddr::V4(a)) if a.ip().is_unspecified() => format!("127.0.0.1:{}", a.port()),
            Ok(SocketAddr::V6(a)) if a.ip().is_unspecified() => format!("[::1]:{}", a.port()),
            _ => listen.to_string(),
        };
        Target::parse(&format!("http://{authority}"))
    }

    fn url(&self) -> String {
        format!("http://{}{}", self.authority, self.path)
    }
}

/// `host[:port]`, `[v6][:port]`; port 80 when absent.
fn split_host_port(authority: &str) -> Option<(String, u16)> {
    let (host, port) = match authority.strip_prefix('[') {
        Some(v6) => {
            let (host, after) = v6.split_once(']')?;
            (host, after.strip_prefix(':'))
        }
        None => match authority.split_once(':') {
            Some((host, port)) => (host, Some(port)),
            None => (authority, None),
        },
    };
    let port = port.map_or(Some(80), |p| p.parse::<u16>().ok().filter(|p| *p != 0))?;
    (!host.is_empty()).then(|| (host.to_string(), port))
}

/// GETs the target's `/healthz`: `Ok` with a one-line report when it
/// answers 200 within `timeout` (allowed for connecting, and again for the
/// exchange), else why not.
pub fn check(target: &Target, timeout: Duration) -> Result<String, HealthError> {
    let start = Instant::now();
    let url = target.url();
    let mut stream = connect(target, timeout)?;
    let exchange = |source| HealthError::Exchange { target: url.clone(), source };
    stream.set_read_timeout(Some(timeout)).map_err(exchange)?;
    stream.set_write_timeout(Some(timeout)).map_err(exchange)?;
    let request = format!(
        "GET {} HTTP/1.1\r\nHost: {}\r\nUser-Agent: fluxbound-health\r\nConnection: close\r\n\r\n",
        target.path, target.authority
    );
    stream.write_all(request.as_bytes()).map_err(exchange)?;
    let status_line = read_status_line(&mut stream).map_err(exchange)?;
    let ms = start.elapsed().as_millis();
    match status_line.split(' ').nth(1) {
        Some("200") => Ok(format!("ok: {url} answered 200 in {ms} ms")),
        _ => Err(HealthError::Unhealthy { target: url, status_line }),
    }
}

fn connect(target: &Target, timeout: Duration) -> Result<TcpStream, HealthError> {
    let url = target.url();
    let err = |source| HealthError::Connect { target: url.clone(), source };
    let mut last = io::Error::new(io::ErrorKind::NotFound, "the host has no address");
    for addr in (target.host.as_str(), target.port).to_socket_addrs().map_err(err)? {
        match TcpStream::connect_timeout(&addr, timeout) {
            Ok(stream) => return Ok(stream),
            Err(e) => last = e,
        }
    }
    Err(err(last))
}

/// The first line of the answer, without its line end.
fn read_status_line(stream: &mut impl Read) -> io::Result<String> {
    let mut got = Vec::new();
    let mut chunk = [0_u8; 512];
    while !got.contains(&b'\n') && got.len() < MAX_STATUS_LINE_BYTES {
        let n = stream.read(&mut chunk)?;
        if n == 0 {
            break;
        }
        got.extend_from_slice(&chunk[..n]);
    }
    let line = got.split(|b| *b == b'\n').next().unwrap_or_default();
    let line = String::from_utf8_lossy(line).trim_end().to_string();
    if !line.starts_with("HTTP/") {
        return Err(io::Error::new(io::ErrorKind::InvalidData, "the answer is not HTTP"));
    }
    Ok(line)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn target(authority: &str, host: &str, port: u16, path: &str) -> Target {
        Target { authority: authority.into(), host: host.into(), port, path: path.into() }
    }

    #[test]
    fn a_url_gives_host_port_and_the_healthz_path_under_its_base() {
        assert_eq!(
            Target::parse("http://127.0.0.1:8080").unwrap(),
            target("127.0.0.1:8080", "127.0.0.1", 8080, "/healthz")
        );
        assert_eq!(Target::parse("HTTP://box/api/").unwrap(), target("box", "box", 80, "/api/healthz"));
        assert_eq!(Target::parse("http://[::1]:9000").unwrap(), target("[::1]:9000", "::1", 9000, "/healthz"));
    }

    #[test]
    fn a_url_that_is_not_plain_http_to_a_host_is_refused() {
        for url in [
            "https://x",
            "x:8080",
            "http://",
            "http://:80",
            "http://h:0",
            "http://h:99999",
            "http://u@h",
            "http://h/?q",
        ] {
            assert!(matches!(Target::parse(url), Err(HealthError::Url(_))), "{url}");
        }
    }

    #[test]
    fn an_unspecified_listen_address_is_probed_on_loopback() {
        assert_eq!(Target::of_listen("0.0.0.0:8080").unwrap().url(), "http://127.0.0.1:8080/healthz");
        assert_eq!(Target::of_listen("[::]:81").unwrap().url(), "http://[::1]:81/healthz");
        assert_eq!(Target::of_listen("10.0.0.5:80").unwrap().url(), "http://10.0.0.5:80/healthz");
    }

    #[test]
    fn the_status_line_is_read_up_to_its_line_end() {
        let mut answer: &[u8] = b"HTTP/1.1 503 Service Unavailable\r\ncontent-type: x\r\n\r\n{}";
        assert_eq!(read_status_line(&mut answer).unwrap(), "HTTP/1.1 503 Service Unavailable");
        let mut junk: &[u8] = b"SSH-2.0-x\r\n";
        assert!(read_status_line(&mut junk).is_err());
    }
}
