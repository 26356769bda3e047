//! Request bodies at the edge: too large by their header, or too slow.
//!
//! hyper sends `100 Continue` to a client that asked for it only when the
//! body is first read. [`refuse_large`] runs before anything reads it, so a
//! body announced over the bound is answered 413 at once, without `100
//! Continue` and without a byte of it being received. A body without a
//! `Content-Length` (chunked) is still bounded as it is read, by
//! `DefaultBodyLimit` in the extractor.
//!
//! [`body_deadline`] gives a body the body-read timeout, counted from its
//! head; past it the read fails, and the answer, whatever the handler made
//! of the failed read, becomes 408.
//!
//! Both answers close the connection: the rest of the body is never read,
//! so the connection cannot carry another request.

use super::problem::ApiError;
use axum::body::{Body, Bytes};
use axum::extract::{Request, State};
use axum::http::{HeaderValue, header};
use axum::middleware::Next;
use axum::response::{IntoResponse, Response};
use http_body::{Body as _, Frame, SizeHint};
use std::future::Future;
use std::pin::Pin;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::task::{Context, Poll};
use std::time::Duration;

/// Middleware: 413 when `Content-Length` exceeds `limit` bytes.
pub async fn refuse_large(State(limit): State<usize>, req: Request, next: Next) -> Response {
    let announced = req
        .headers()
        .get(header::CONTENT_LENGTH)
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.trim().parse::<u64>().ok());
    match announced {
        Some(n) if n > limit as u64 => closing(ApiError::too_large(limit).into_response()),
        _ => next.run(req).await,
    }
}

/// Middleware: 408 when the body has not arrived in full within `timeout`
/// of the request head.
pub async fn body_deadline(State(timeout): State<Duration>, req: Request, next: Next) -> Response {
    if req.body().is_end_stream() {
        return next.run(req).await;
    }
    let expired = Arc::new(AtomicBool::new(false));
    let sleep = Box::pin(tokio::time::sleep(timeout));
    let req = req.map(|inner| Body::new(Deadline { inner, sleep, expired: expired.clone(), done: false }));
    let res = next.run(req).await;
    if expired.load(Ordering::Acquire) {
        return closing(ApiError::body_timeout(timeout).into_response());
    }
    res
}

/// Marks an answer as the connection's last.
fn closing(mut res: Response) -> Response {
    res.headers_mut().insert(header::CONNECTION, HeaderValue::from_static("close"));
    res
}

/// The read of a body that arrived too slowly.
#[derive(Debug, thiserror::Error)]
#[error("the request body did not arrive in time")]
struct BodyTimedOut;

/// A request body that fails once its deadline passes before its end.
struct Deadline {
    inner: Body,
    sleep: Pin<Box<tokio::time::Sleep>>,
    expired: Arc<AtomicBool>,
    done: bool,
}

impl http_body::Body for Deadline {
    type Data = Bytes;
    type Error = axum::BoxError;

    fn poll_frame(self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<Option<Result<Frame<Bytes>, Self::Error>>> {
        let this = self.get_mut();
        if this.done {
            return Poll::Ready(None);
        }
        match Pin::new(&mut this.inner).poll_frame(cx) {
            Poll::Ready(None) => {
                this.done = true;
                Poll::Ready(None)
            }
            Poll::Ready(Some(frame)) => Poll::Ready(Some(frame.map_err(Into::into))),
            Poll::Pending => match this.sleep.as_mut().poll(cx) {
                Poll::Ready(()) => {
                    this.done = true;
                    this.expired.store(true, Ordering::Release);
                    Poll::Ready(Some(Err(BodyTimedOut.into())))
                }
                Poll::Pending => Poll::Pending,
            },
        }
    }
    fn is_end_stream(&self) -> bool {
        self.done || self.inner.is_end_stream()
    }
    fn size_hint(&self) -> SizeHint {
        self.inner.size_hint()
    }
}
