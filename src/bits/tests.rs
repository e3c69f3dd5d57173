//! Unit tests of the parent module.

use super::Bits;

#[test]
fn flags_are_independent() {
    let mut b = Bits::NONE;
    b.set(1, true);
    b.set(4, true);
    assert!(b.get(1) && !b.get(2) && b.get(4));
    b.set(1, false);
    assert!(!b.get(1) && b.get(4));
    let mut c = Bits::NONE;
    c.set(4, true);
    assert_eq!(b, c);
    b.set(4, false);
    assert_eq!(b, Bits::NONE);
    assert!(!b.get(0x80));
}

#[test]
fn an_enum_keeps_its_tag_in_the_byte() {
    assert_eq!(size_of::<Option<Bits>>(), 1);
}
