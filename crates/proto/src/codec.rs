//! The gRPC codec of every binodal service and client: protobuf through `prost`, as
//! `tonic-prost`'s own codec, with two changes for large messages (a batch of 1000 states is
//! about 93 KB):
//!
//! - **Encoding** sizes the outgoing buffer once from the message's encoded length. tonic
//!   starts each message in an 8 KiB buffer and `prost` writes field by field, so a large
//!   answer grew its buffer by doubling, copying what was written at every step. Reserving
//!   `encoded_len()` first costs a pass over the lengths (constant time per packed array;
//!   `prost`'s own `encode` makes a second one to check the space).
//! - **Decoding** takes the received message as one contiguous `Bytes` (a split of tonic's
//!   buffer, no copy) and decodes from its slice, so that each element of a packed array is
//!   read with a bounds check on a plain slice instead of through tonic's length-limited
//!   buffer wrapper.
//!
//! Every end-to-end test of the server and clients goes through it.

use std::marker::PhantomData;

use prost::Message;
use prost::bytes::Buf as _;
use tonic::Status;
use tonic::codec::{BufferSettings, Codec, DecodeBuf, Decoder, EncodeBuf, Encoder};

/// Protobuf codec whose encoder reserves each message's encoded length before writing it.
#[derive(Debug, Clone)]
pub struct PreSizedCodec<T, U> {
    _types: PhantomData<(T, U)>,
}

impl<T, U> Default for PreSizedCodec<T, U> {
    fn default() -> Self {
        PreSizedCodec {
            _types: PhantomData,
        }
    }
}

impl<T, U> Codec for PreSizedCodec<T, U>
where
    T: Message + Send + 'static,
    U: Message + Default + Send + 'static,
{
    type Encode = T;
    type Decode = U;
    type Encoder = PreSizedEncoder<T>;
    type Decoder = PreSizedDecoder<U>;

    fn encoder(&mut self) -> Self::Encoder {
        PreSizedEncoder { _type: PhantomData }
    }

    fn decoder(&mut self) -> Self::Decoder {
        PreSizedDecoder { _type: PhantomData }
    }
}

/// Encoder of [`PreSizedCodec`].
#[derive(Debug, Clone)]
pub struct PreSizedEncoder<T> {
    _type: PhantomData<T>,
}

impl<T: Message> Encoder for PreSizedEncoder<T> {
    type Item = T;
    type Error = Status;

    fn encode(&mut self, item: T, buf: &mut EncodeBuf<'_>) -> Result<(), Status> {
        let len = item.encoded_len();
        buf.reserve(len);
        item.encode(buf)
            .map_err(|e| Status::internal(format!("cannot encode a {len}-byte message: {e}")))
    }

    fn buffer_settings(&self) -> BufferSettings {
        BufferSettings::default()
    }
}

/// Decoder of [`PreSizedCodec`].
#[derive(Debug, Clone)]
pub struct PreSizedDecoder<U> {
    _type: PhantomData<U>,
}

impl<U: Message + Default> Decoder for PreSizedDecoder<U> {
    type Item = U;
    type Error = Status;

    fn decode(&mut self, buf: &mut DecodeBuf<'_>) -> Result<Option<U>, Status> {
        let message = buf.copy_to_bytes(buf.remaining());
        // A message that does not parse is INTERNAL, as in the gRPC status-code guide
        // (doc/statuscodes.md of the gRPC project) and tonic-prost's own codec.
        U::decode(message.as_ref())
            .map(Some)
            .map_err(|e| Status::internal(e.to_string()))
    }

    fn buffer_settings(&self) -> BufferSettings {
        BufferSettings::default()
    }
}
