//! How an answer's bytes are handed to HTTP/2: mid-sized answers in pieces small enough to be
//! copied into the connection's write buffer.
//!
//! The HTTP/2 library (`h2`), writing to a socket that takes vectored writes (plain TCP and
//! rustls TLS both do), copies a DATA frame of under 256 bytes into the connection's write
//! buffer, where the answers of many calls collect and leave in one write. A larger frame it
//! keeps aside ("chains") and writes out, with whatever is buffered, before it accepts the
//! next frame: every answer of 256 bytes or more costs a write system call of its own. Under
//! load that is one of the costs of a single-state answer (about 1 KB) over a health check's
//! (2 bytes, 7 with the gRPC message header): measured with `binodal-load` at 2 connections
//! and 32 calls in flight (`docs/benchmarks.md`, "End to end").
//!
//! [`Pieced`] hands an answer's data of up to [`LARGEST_PIECED`] bytes to HTTP/2 in pieces of
//! at most [`PIECE`] bytes (the pieces are views of the same buffer, not copies). Larger data
//! (batches, catalogue listings) is left whole: there one write per answer is no loss, and a
//! frame per 240 bytes would cost more than it saves. The bytes on the wire are the same
//! message; only its division into DATA frames changes, which HTTP/2 leaves to the sender.

use std::pin::Pin;
use std::task::{Context, Poll};

use bytes::Bytes;
use http_body::{Frame, SizeHint};
use tonic::body::Body;

/// The largest piece: under `h2`'s 256-byte threshold for copying a DATA frame.
pub(crate) const PIECE: usize = 240;
/// Data longer than this is passed on whole.
pub(crate) const LARGEST_PIECED: usize = 8 * 1024;

/// An answer body whose mid-sized data frames are passed on in pieces (see the module
/// documentation).
pub(crate) struct Pieced {
    inner: Body,
    /// Data of the current frame not yet passed on.
    rest: Bytes,
}

impl Pieced {
    pub(crate) fn new(inner: Body) -> Pieced {
        Pieced {
            inner,
            rest: Bytes::new(),
        }
    }

    /// The next piece of `rest`.
    fn next_piece(&mut self) -> Frame<Bytes> {
        let take = self.rest.len().min(PIECE);
        Frame::data(self.rest.split_to(take))
    }
}

impl http_body::Body for Pieced {
    type Data = Bytes;
    type Error = tonic::Status;

    fn poll_frame(
        mut self: Pin<&mut Self>,
        cx: &mut Context<'_>,
    ) -> Poll<Option<Result<Frame<Bytes>, Self::Error>>> {
        if !self.rest.is_empty() {
            return Poll::Ready(Some(Ok(self.next_piece())));
        }
        let polled = Pin::new(&mut self.inner).poll_frame(cx);
        let Poll::Ready(Some(Ok(frame))) = polled else {
            return polled;
        };
        match frame.into_data() {
            Ok(data) if data.len() > PIECE && data.len() <= LARGEST_PIECED => {
                self.rest = data;
                Poll::Ready(Some(Ok(self.next_piece())))
            }
            Ok(data) => Poll::Ready(Some(Ok(Frame::data(data)))),
            Err(frame) => Poll::Ready(Some(Ok(frame))),
        }
    }

    fn is_end_stream(&self) -> bool {
        self.rest.is_empty() && self.inner.is_end_stream()
    }

    fn size_hint(&self) -> SizeHint {
        let inner = self.inner.size_hint();
        let rest = self.rest.len() as u64;
        let mut hint = SizeHint::new();
        hint.set_lower(inner.lower() + rest);
        if let Some(upper) = inner.upper() {
            hint.set_upper(upper + rest);
        }
        hint
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use http_body::Body as _;
    use http_body_util::BodyExt as _;

    /// Every byte arrives, in order, in pieces of at most `PIECE` bytes for mid-sized data and
    /// whole for small and large data.
    #[tokio::test]
    async fn pieces_carry_every_byte_in_order() {
        for len in [
            0,
            1,
            PIECE,
            PIECE + 1,
            1052,
            LARGEST_PIECED,
            LARGEST_PIECED + 1,
        ] {
            let data: Vec<u8> = (0..len).map(|i| (i % 251) as u8).collect();
            let mut body = Pieced::new(Body::new(http_body_util::Full::new(Bytes::from(
                data.clone(),
            ))));
            let mut received = Vec::new();
            let mut frames = 0;
            while let Some(frame) = body.frame().await {
                let chunk = frame.expect("data").into_data().expect("a data frame");
                if len > PIECE && len <= LARGEST_PIECED {
                    assert!(chunk.len() <= PIECE, "{len}: a piece of {}", chunk.len());
                }
                received.extend_from_slice(&chunk);
                frames += 1;
            }
            assert_eq!(received, data, "{len} bytes");
            match len {
                // An empty body yields at most one (empty) frame.
                0 => assert!(frames <= 1, "{frames} frames for no data"),
                l if l > PIECE && l <= LARGEST_PIECED => {
                    assert_eq!(frames, l.div_ceil(PIECE), "{len} bytes")
                }
                _ => assert_eq!(frames, 1, "{len} bytes"),
            }
        }
    }

    /// A gRPC answer's shape: data, then trailers with the status. The trailers come after
    /// the last piece, and the body does not say it has ended while pieces remain.
    #[tokio::test]
    async fn trailers_follow_the_last_piece() {
        let data = Bytes::from(vec![7u8; 1052]);
        let mut trailers = http::HeaderMap::new();
        trailers.insert("grpc-status", http::HeaderValue::from_static("0"));
        let frames = vec![
            Ok::<_, tonic::Status>(Frame::data(data.clone())),
            Ok(Frame::trailers(trailers.clone())),
        ];
        let inner = http_body_util::StreamBody::new(frame_stream(frames));
        let mut body = Pieced::new(Body::new(inner));
        let mut received = Vec::new();
        loop {
            let frame = body.frame().await.expect("a frame").expect("no error");
            match frame.into_data() {
                Ok(chunk) => {
                    received.extend_from_slice(&chunk);
                    if received.len() < data.len() {
                        assert!(!body.is_end_stream(), "pieces remain");
                    }
                }
                Err(frame) => {
                    assert_eq!(received, data.as_ref(), "every piece came first");
                    assert_eq!(frame.into_trailers().ok(), Some(trailers));
                    break;
                }
            }
        }
        assert!(body.frame().await.is_none(), "nothing after the trailers");
    }

    /// The frames as a stream.
    fn frame_stream<T>(items: Vec<T>) -> tokio_stream::Iter<std::vec::IntoIter<T>> {
        tokio_stream::iter(items)
    }
}
