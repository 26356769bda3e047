//! Failed authentications are limited per client address: the TCP peer, or
//! behind a trusted proxy the right-most untrusted `X-Forwarded-For` entry.
//! Every test request comes from the contract proxy on 127.0.0.1, which
//! forwards `X-Forwarded-For` as sent.

use crate::helpers::*;
use fluxbound::service::Role;
use reqwest::Response;

/// A well-formed key that no organisation has.
const BAD_KEY: &str =
    "fxb_0123456789abcdef0123456789abcdef_0000000000000000000000000000000000000000000000000000000000000000";

async fn get_from(app: &TestApp, key: &str, forwarded_for: Option<&str>) -> Response {
    let mut req = app.req(reqwest::Method::GET, "/v1/sites", key);
    if let Some(f) = forwarded_for {
        req = req.header("X-Forwarded-For", f);
    }
    req.send().await.expect("request")
}

/// The limit is the default: 10 failures a minute.
const LIMIT: usize = fluxbound::config::ClientPolicy::DEFAULT_AUTH_FAILURES as usize;

async fn assert_limited(res: Response) {
    let retry: u64 = res.headers().get("retry-after").expect("Retry-After").to_str().unwrap().parse().unwrap();
    assert!((1..=60).contains(&retry), "Retry-After {retry}");
    let problem = assert_problem(res, 429, "auth-rate-limited", None).await;
    assert!(problem["detail"].as_str().unwrap().contains("failed authentications"), "{problem}");
}

#[tokio::test]
async fn eleven_bad_keys_from_one_address_make_the_eleventh_answer_429_even_with_a_good_key() {
    let app = spawn_app().await;
    let good = app.key("acme", Role::Viewer).await;
    for _ in 0..LIMIT {
        assert_problem(get_from(&app, BAD_KEY, None).await, 401, "unauthorized", None).await;
    }
    assert_limited(get_from(&app, BAD_KEY, None).await).await;
    // Before the key is even looked at: a good key from there waits too.
    assert_limited(get_from(&app, &good, None).await).await;
}

#[tokio::test]
async fn requests_without_a_key_are_not_counted_as_failures() {
    let app = spawn_app().await;
    let good = app.key("acme", Role::Viewer).await;
    for _ in 0..2 * LIMIT {
        assert_problem(get_from(&app, "", None).await, 401, "unauthorized", None).await;
    }
    assert_eq!(get_from(&app, &good, None).await.status(), 200);
}

#[tokio::test]
async fn behind_a_trusted_proxy_each_forwarded_client_has_its_own_count() {
    let db = TestDb::fresh().await;
    let app = spawn_app_configured(db, |c| {
        c.clients.trusted_proxies = vec![fluxbound::config::parse_trusted_proxy("127.0.0.0/8").unwrap()];
    })
    .await;
    let good = app.key("acme", Role::Viewer).await;
    // The guesser writes a fresh left-most address each time; the right-most
    // entry, which our proxy appended, is what counts.
    for i in 0..LIMIT {
        let forwarded = format!("198.51.100.{i}, 203.0.113.7");
        assert_problem(get_from(&app, BAD_KEY, Some(&forwarded)).await, 401, "unauthorized", None).await;
    }
    assert_limited(get_from(&app, &good, Some("203.0.113.7")).await).await;
    // Another client behind the same proxy is not affected.
    assert_eq!(get_from(&app, &good, Some("203.0.113.8")).await.status(), 200);
    // Nor is the proxy itself, nor a client behind a chain of our proxies.
    assert_eq!(get_from(&app, &good, None).await.status(), 200);
    assert_eq!(get_from(&app, &good, Some("192.0.2.1, 127.0.0.5")).await.status(), 200);
    assert_limited(get_from(&app, &good, Some("203.0.113.7, 127.0.0.5")).await).await;
}

#[tokio::test]
async fn x_forwarded_for_from_an_untrusted_peer_is_ignored() {
    let app = spawn_app().await;
    let good = app.key("acme", Role::Viewer).await;
    for i in 0..LIMIT {
        let forwarded = format!("203.0.113.{i}");
        assert_problem(get_from(&app, BAD_KEY, Some(&forwarded)).await, 401, "unauthorized", None).await;
    }
    // All ten came from the peer 127.0.0.1, whatever they claimed.
    assert_limited(get_from(&app, &good, Some("198.51.100.99")).await).await;
}

#[tokio::test]
async fn a_zero_limit_turns_the_failed_authentication_limit_off() {
    let app = spawn_app_configured(TestDb::fresh().await, |c| c.clients.auth_failures = 0).await;
    let good = app.key("acme", Role::Viewer).await;
    for _ in 0..2 * LIMIT {
        assert_problem(get_from(&app, BAD_KEY, None).await, 401, "unauthorized", None).await;
    }
    assert_eq!(get_from(&app, &good, None).await.status(), 200);
}

mod address {
    //! The client address and its bucket, without a server.
    use axum::http::{HeaderMap, HeaderValue};
    use fluxbound::config::parse_trusted_proxy;
    use fluxbound::http::client::TrustedProxies;
    use fluxbound::http::rate::{ClientKey, FailedAuthLimiter};
    use std::net::IpAddr;
    use std::time::Duration;

    fn ip(s: &str) -> IpAddr {
        s.parse().unwrap()
    }

    fn forwarded(lines: &[&str]) -> HeaderMap {
        let mut h = HeaderMap::new();
        for l in lines {
            h.append("x-forwarded-for", HeaderValue::from_str(l).unwrap());
        }
        h
    }

    fn proxies(nets: &[&str]) -> TrustedProxies {
        TrustedProxies::new(nets.iter().map(|n| parse_trusted_proxy(n).unwrap()).collect())
    }

    #[test]
    fn the_right_most_untrusted_entry_over_several_header_lines_is_the_client() {
        let t = proxies(&["10.0.0.0/8", "2001:db8:ffff::1"]);
        let h = forwarded(&["198.51.100.1, 203.0.113.9", "10.1.2.3"]);
        assert_eq!(t.client_ip(Some(ip("10.0.0.1")), &h), Some(ip("203.0.113.9")));
        let h = forwarded(&["203.0.113.9:4711, [2001:db8:ffff::1]:443"]);
        assert_eq!(t.client_ip(Some(ip("10.0.0.1")), &h), Some(ip("203.0.113.9")), "ports are dropped");
    }

    #[test]
    fn an_unreadable_entry_stops_the_walk_at_the_last_believed_hop() {
        let t = proxies(&["10.0.0.0/8"]);
        let h = forwarded(&["203.0.113.9, unknown, 10.9.9.9"]);
        assert_eq!(t.client_ip(Some(ip("10.0.0.1")), &h), Some(ip("10.9.9.9")));
        // With no header a trusted peer is itself the client.
        assert_eq!(t.client_ip(Some(ip("10.0.0.1")), &HeaderMap::new()), Some(ip("10.0.0.1")));
        assert_eq!(t.client_ip(None, &h), None, "no peer: the unknown bucket");
    }

    #[test]
    fn an_ipv4_peer_seen_through_an_ipv6_socket_is_matched_as_ipv4() {
        let t = proxies(&["192.0.2.0/24"]);
        let h = forwarded(&["203.0.113.9"]);
        assert_eq!(t.client_ip(Some(ip("::ffff:192.0.2.7")), &h), Some(ip("203.0.113.9")));
    }

    #[test]
    fn a_trusted_proxy_must_be_an_address_or_a_network() {
        assert_eq!(parse_trusted_proxy("10.1.2.3/8").unwrap().to_string(), "10.0.0.0/8");
        assert_eq!(parse_trusted_proxy("::1").unwrap().to_string(), "::1/128");
        assert!(parse_trusted_proxy("proxy.local").unwrap_err().contains("CIDR"));
    }

    #[test]
    fn ipv6_addresses_of_one_slash_64_share_a_bucket() {
        let a = ClientKey::of(Some(ip("2001:db8:1:2::1")));
        assert_eq!(a, ClientKey::of(Some(ip("2001:db8:1:2:ffff::9"))));
        assert_ne!(a, ClientKey::of(Some(ip("2001:db8:1:3::1"))));
        assert_eq!(ClientKey::of(Some(ip("::ffff:192.0.2.7"))), ClientKey::of(Some(ip("192.0.2.7"))));
    }

    #[test]
    fn the_limiter_refuses_after_max_failures_with_a_wait_within_the_window() {
        let limiter = FailedAuthLimiter::new(3, Duration::from_secs(60));
        let (a, b) = (ClientKey::of(Some(ip("192.0.2.1"))), ClientKey::of(Some(ip("192.0.2.2"))));
        for _ in 0..3 {
            assert_eq!(limiter.check(a), Ok(()));
            limiter.record_failure(a);
        }
        let wait = limiter.check(a).unwrap_err();
        assert!((1..=60).contains(&wait), "{wait}");
        assert_eq!(limiter.check(b), Ok(()), "another client is not affected");
    }
}
