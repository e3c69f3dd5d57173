//! Snapshots: a use type's whole state as a fixed-size array of bytes, so that firmware
//! can keep it in retained RAM or flash across a brown-out and carry on where it was.
//!
//! Layout of a snapshot (all numbers little-endian):
//!
//! | bytes | content |
//! | --- | --- |
//! | 2 | magic `b"IH"` |
//! | 1 | format version ([`FORMAT_VERSION`]) |
//! | 1 | kind: 1 drone, 2 balloon, 3 walk |
//! | 2 | the balloon's profile capacity `N` (0 for the others) |
//! | ... | the state, field by field, in a fixed order and size |
//! | 4 | CRC-32 (ISO-HDLC, the one of zip and Ethernet) of every byte before it |
//!
//! The settings are not in it: the firmware restores with the same settings it ran
//! with (they live in flash). A snapshot that is truncated, fails its checksum, has
//! another version, kind or capacity, or holds a value no unit accepts is refused
//! with an [`Error`], and nothing is built from it.
//!
//! Written here: the state types are the crate's own, and a byte layout of fixed size
//! with a checksum is a few lines per type; a serialisation framework would bring a
//! derive per private type and a variable-size format.

use crate::Error;

/// Version of the snapshot format; a snapshot of another version is refused with
/// [`Error::SnapshotVersion`].
pub const FORMAT_VERSION: u8 = 3;

/// Bytes of the header (magic, version, kind, capacity) and of the checksum.
pub(crate) const FRAME_LEN: usize = 6 + 4;

const CRC: crc::Crc<u32> = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC);

/// Writes fields in order into a byte slice (its length checked once, up front).
pub(crate) struct Writer<'b> {
    buf: &'b mut [u8],
    pos: usize,
}

/// Reads fields in order from a byte slice.
pub(crate) struct Reader<'b> {
    buf: &'b [u8],
    pos: usize,
}

impl Writer<'_> {
    pub fn bytes(&mut self, b: &[u8]) {
        if let Some(dst) = self.buf.get_mut(self.pos..self.pos + b.len()) {
            dst.copy_from_slice(b);
        }
        self.pos += b.len();
    }
}

impl Reader<'_> {
    pub fn bytes<const K: usize>(&mut self) -> Result<[u8; K], Error> {
        let src = self
            .buf
            .get(self.pos..self.pos + K)
            .ok_or(Error::SnapshotCorrupt)?;
        let mut out = [0u8; K];
        out.copy_from_slice(src);
        self.pos += K;
        Ok(out)
    }
}

/// A value with a fixed-size byte form. `load` reads into an existing value so that
/// parts that are not state (borrowed settings) stay as they are.
pub(crate) trait Snap {
    /// Bytes of the form.
    const LEN: usize;
    fn save(&self, w: &mut Writer<'_>);
    fn load(&mut self, r: &mut Reader<'_>) -> Result<(), Error>;
}

macro_rules! snap_number {
    ($($t:ty),*) => {$(
        impl Snap for $t {
            const LEN: usize = core::mem::size_of::<$t>();
            fn save(&self, w: &mut Writer<'_>) {
                w.bytes(&self.to_le_bytes());
            }
            fn load(&mut self, r: &mut Reader<'_>) -> Result<(), Error> {
                *self = <$t>::from_le_bytes(r.bytes()?);
                Ok(())
            }
        }
    )*};
}
snap_number!(u8, u16, u32, u64, i32, f32);

impl Snap for bool {
    const LEN: usize = 1;
    fn save(&self, w: &mut Writer<'_>) {
        w.bytes(&[u8::from(*self)]);
    }
    fn load(&mut self, r: &mut Reader<'_>) -> Result<(), Error> {
        *self = match r.bytes::<1>()? {
            [0] => false,
            [1] => true,
            _ => return Err(Error::SnapshotCorrupt),
        };
        Ok(())
    }
}

/// A value to load an option's content into.
pub(crate) trait Blank {
    fn blank() -> Self;
}

impl<T: Default> Blank for T {
    fn blank() -> Self {
        T::default()
    }
}

/// An option: a presence byte, then the value's bytes (zeros when absent, so that the
/// size is fixed).
impl<T: Snap + Blank> Snap for Option<T> {
    const LEN: usize = 1 + T::LEN;
    fn save(&self, w: &mut Writer<'_>) {
        match self {
            Some(v) => {
                w.bytes(&[1]);
                v.save(w);
            }
            None => {
                w.bytes(&[0]);
                for _ in 0..T::LEN {
                    w.bytes(&[0]);
                }
            }
        }
    }
    fn load(&mut self, r: &mut Reader<'_>) -> Result<(), Error> {
        let mut present = false;
        present.load(r)?;
        let mut v = T::blank();
        if present {
            v.load(r)?;
            *self = Some(v);
        } else {
            r.bytes_skip(T::LEN)?;
            *self = None;
        }
        Ok(())
    }
}

impl<T: Snap, const K: usize> Snap for [T; K] {
    const LEN: usize = K * T::LEN;
    fn save(&self, w: &mut Writer<'_>) {
        for v in self {
            v.save(w);
        }
    }
    fn load(&mut self, r: &mut Reader<'_>) -> Result<(), Error> {
        for v in self {
            v.load(r)?;
        }
        Ok(())
    }
}

impl Reader<'_> {
    fn bytes_skip(&mut self, n: usize) -> Result<(), Error> {
        if self.pos + n > self.buf.len() {
            return Err(Error::SnapshotCorrupt);
        }
        self.pos += n;
        Ok(())
    }
}

/// `Snap` for a struct, field by field in the order given (inside the struct's module,
/// so that private fields can be named).
macro_rules! snap_fields {
    (impl[$($g:tt)*] $ty:ty { $($field:ident),* $(,)? }) => {
        impl<$($g)*> $crate::snapshot::Snap for $ty {
            const LEN: usize = 0 $(+ $crate::snapshot::field_len(|s: &Self| &s.$field))*;
            fn save(&self, w: &mut $crate::snapshot::Writer<'_>) {
                $($crate::snapshot::Snap::save(&self.$field, w);)*
            }
            fn load(
                &mut self,
                r: &mut $crate::snapshot::Reader<'_>,
            ) -> Result<(), $crate::Error> {
                $($crate::snapshot::Snap::load(&mut self.$field, r)?;)*
                Ok(())
            }
        }
    };
    ($ty:ty { $($field:ident),* $(,)? }) => {
        $crate::snapshot::snap_fields!(impl[] $ty { $($field),* });
    };
}
pub(crate) use snap_fields;

/// The form's size of the field a projection names (used by [`snap_fields`] to sum a
/// struct's size without naming the fields' types).
pub(crate) const fn field_len<S, F: Snap>(_: fn(&S) -> &F) -> usize {
    F::LEN
}

/// `Snap` for a field-less enum, through a byte tag in the order given.
macro_rules! snap_enum {
    ($ty:ty { $($variant:path),* $(,)? }) => {
        impl $crate::snapshot::Snap for $ty {
            const LEN: usize = 1;
            fn save(&self, w: &mut $crate::snapshot::Writer<'_>) {
                let all = [$($variant),*];
                let tag = all.iter().position(|v| v == self).unwrap_or(0);
                w.bytes(&[tag as u8]);
            }
            fn load(
                &mut self,
                r: &mut $crate::snapshot::Reader<'_>,
            ) -> Result<(), $crate::Error> {
                let all = [$($variant),*];
                let [tag] = r.bytes::<1>()?;
                *self = *all.get(usize::from(tag)).ok_or($crate::Error::SnapshotCorrupt)?;
                Ok(())
            }
        }
    };
}
pub(crate) use snap_enum;

/// Writes the framed snapshot of `state` (kind `kind`, capacity `capacity`) into
/// `out`, returning its length. Errors: [`Error::CapacityFull`] if `out` is shorter.
pub(crate) fn write<T: Snap>(
    state: &T,
    kind: u8,
    capacity: u16,
    out: &mut [u8],
) -> Result<usize, Error> {
    let len = FRAME_LEN + T::LEN;
    let buf = out.get_mut(..len).ok_or(Error::CapacityFull)?;
    let mut w = Writer { buf, pos: 0 };
    w.bytes(b"IH");
    w.bytes(&[FORMAT_VERSION, kind]);
    w.bytes(&capacity.to_le_bytes());
    state.save(&mut w);
    let body = w.buf.get(..len - 4).ok_or(Error::CapacityFull)?;
    let crc = CRC.checksum(body);
    w.bytes(&crc.to_le_bytes());
    Ok(len)
}

/// Reads a framed snapshot of kind `kind` and capacity `capacity` into `state`.
/// Errors: [`Error::SnapshotCorrupt`] (truncated, bad checksum, bad magic, a value no
/// field accepts), [`Error::SnapshotVersion`], [`Error::SnapshotMismatch`] (another
/// kind or capacity). `state` may be partly written on error: callers load into a
/// fresh copy.
pub(crate) fn read<T: Snap>(
    state: &mut T,
    kind: u8,
    capacity: u16,
    bytes: &[u8],
) -> Result<(), Error> {
    let len = FRAME_LEN + T::LEN;
    let frame = bytes.get(..len).ok_or(Error::SnapshotCorrupt)?;
    let (body, crc) = frame.split_at(len - 4);
    let mut r = Reader { buf: body, pos: 0 };
    let [m0, m1, version, found_kind] = r.bytes::<4>()?;
    if [m0, m1] != *b"IH" {
        return Err(Error::SnapshotCorrupt);
    }
    if CRC.checksum(body).to_le_bytes() != crc {
        return Err(Error::SnapshotCorrupt);
    }
    if version != FORMAT_VERSION {
        return Err(Error::SnapshotVersion);
    }
    if found_kind != kind || u16::from_le_bytes(r.bytes()?) != capacity {
        return Err(Error::SnapshotMismatch);
    }
    state.load(&mut r)
}
