//! Who is calling, as far as the network can tell: the TCP peer, or, when
//! the peer is one of the configured trusted proxies, the right-most
//! address in `X-Forwarded-For` that is not a trusted proxy.
//!
//! Why the right-most: each proxy appends the address it received the
//! request from, so the list reads client-first, our proxies last. Only the
//! entries our own proxies appended can be believed; everything to their
//! left was sent by the client and can be anything. Walking from the right
//! and skipping our proxies stops at the first address that no proxy of
//! ours vouches for being a proxy: the one that connected to our outermost
//! proxy. Taking the left-most instead would let a client name a fresh
//! address in every request and so escape any per-address limit.

use axum::extract::{ConnectInfo, Request};
use axum::http::HeaderMap;
use axum::middleware::Next;
use axum::response::Response;
use ipnet::IpNet;
use std::net::{IpAddr, SocketAddr};

/// The TCP peer of a request's connection, as a request extension. The
/// server loop puts it there ([`peer_from_connect_info`] does for
/// `axum::serve`); a router used without it (a test calling the router
/// directly) counts every request as one unknown client.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct PeerAddr(pub SocketAddr);

/// Copies axum's `ConnectInfo<SocketAddr>` (from
/// `into_make_service_with_connect_info`) into [`PeerAddr`], unless the
/// server loop already set one.
pub async fn peer_from_connect_info(mut req: Request, next: Next) -> Response {
    if req.extensions().get::<PeerAddr>().is_none()
        && let Some(ConnectInfo(addr)) = req.extensions().get::<ConnectInfo<SocketAddr>>().copied()
    {
        req.extensions_mut().insert(PeerAddr(addr));
    }
    next.run(req).await
}

/// The networks whose `X-Forwarded-For` is believed (`--trusted-proxy`).
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct TrustedProxies(Vec<IpNet>);

impl TrustedProxies {
    pub fn new(networks: Vec<IpNet>) -> Self {
        TrustedProxies(networks)
    }

    fn contains(&self, ip: IpAddr) -> bool {
        self.0.iter().any(|net| net.contains(&ip))
    }

    /// The client address of a request whose TCP peer is `peer` (`None`
    /// when the server loop gave none). An `X-Forwarded-For` entry that is
    /// not an address (only a misconfigured proxy of ours could put one
    /// there) stops the walk at the last believed hop.
    pub fn client_ip(&self, peer: Option<IpAddr>, headers: &HeaderMap) -> Option<IpAddr> {
        let peer = peer?.to_canonical();
        if !self.contains(peer) {
            return Some(peer);
        }
        let lines: Vec<&str> = headers.get_all("x-forwarded-for").iter().filter_map(|v| v.to_str().ok()).collect();
        let mut nearest = peer;
        for hop in lines.iter().flat_map(|l| l.split(',')).rev() {
            let Some(ip) = parse_hop(hop.trim()) else { break };
            if !self.contains(ip) {
                return Some(ip);
            }
            nearest = ip;
        }
        Some(nearest)
    }
}

/// One `X-Forwarded-For` entry: an address, or an address with a port
/// (`1.2.3.4:5678`, `[2001:db8::1]:443`), as some proxies write it.
fn parse_hop(hop: &str) -> Option<IpAddr> {
    let ip = hop.parse::<IpAddr>().or_else(|_| hop.parse::<SocketAddr>().map(|s| s.ip())).ok()?;
    Some(ip.to_canonical())
}
