//! Sparse paged memory: mapping, permissions, the cap on touched bytes,
//! misaligned and page-spanning accesses.

use overlap_isa::memory::PAGE_BYTES;
use overlap_isa::{MemError, Memory};

#[test]
fn little_endian_and_misaligned_across_pages() {
    // Source: RISC-V unprivileged spec, "Memory": the base ISA's memory
    // system is little-endian; misaligned accesses are allowed for ordinary
    // loads and stores (here executed in one piece).
    let mut m = Memory::new(1 << 20);
    m.map("d", 0x1000, 0x3000, true, false).unwrap();
    m.write_u32(0x1000, 0x1122_3344).unwrap();
    let mut b = [0; 4];
    m.read_bytes(0x1000, &mut b).unwrap();
    assert_eq!(b, [0x44, 0x33, 0x22, 0x11]);
    // An 8-byte access straddling the 0x2000 page boundary.
    m.write_u64(0x1ffd, 0x0102_0304_0506_0708).unwrap();
    assert_eq!(m.read_u64(0x1ffd).unwrap(), 0x0102_0304_0506_0708);
    assert_eq!(m.read_u8(0x1fff).unwrap(), 0x06);
    assert_eq!(m.read_u8(0x2000).unwrap(), 0x05);
    assert_eq!(m.read_u16(0x1fff).unwrap(), 0x0506);
    assert_eq!(m.read_u32(0x2002).unwrap(), 0x0001_0203);
    assert_eq!(m.read_sized(0x1ffd, 8).unwrap(), 0x0102_0304_0506_0708);
    assert_eq!(m.touched_bytes(), 2 * PAGE_BYTES);
}

#[test]
fn untouched_bytes_read_zero_and_cost_nothing() {
    let mut m = Memory::new(1 << 20);
    // A 1 TiB region, far larger than the cap.
    m.map("huge", 1 << 40, 1 << 40, true, false).unwrap();
    for addr in [1u64 << 40, (1 << 40) + 12345, (1 << 41) - 8] {
        assert_eq!(m.read_u64(addr).unwrap(), 0);
    }
    assert_eq!(m.touched_bytes(), 0);
    m.write_u8((1 << 40) + 77, 9).unwrap();
    assert_eq!(m.touched_bytes(), PAGE_BYTES);
    assert_eq!(m.read_u8((1 << 40) + 77).unwrap(), 9);
    assert_eq!(m.read_u8((1 << 40) + 78).unwrap(), 0);
}

#[test]
fn cap_exceeded_is_an_error_not_an_allocation() {
    let cap = 16 * PAGE_BYTES;
    let mut m = Memory::new(cap);
    m.map("big", 0x10_0000, 1 << 30, true, false).unwrap();
    for page in 0..16 {
        m.write_u8(0x10_0000 + page * PAGE_BYTES, 1).unwrap();
    }
    let e = m.write_u8(0x10_0000 + 16 * PAGE_BYTES, 1).unwrap_err();
    assert_eq!(e, MemError::CapExceeded { cap_bytes: cap });
    assert!(e.to_string().contains("65536"), "{e}");
    // Already-touched pages stay writable.
    m.write_u64(0x10_0000, 7).unwrap();
    assert_eq!(m.touched_bytes(), cap);
    // A failed page-spanning write changes nothing.
    let edge = 0x10_0000 + 16 * PAGE_BYTES - 4;
    assert!(m.write_u64(edge, u64::MAX).is_err());
    assert_eq!(m.read_u32(edge).unwrap(), 0);
}

#[test]
fn unmapped_accesses_name_the_address() {
    let mut m = Memory::new(1 << 20);
    m.map("d", 0x1000, 0x1000, true, false).unwrap();
    assert_eq!(
        m.read_u64(0),
        Err(MemError::Unmapped {
            addr: 0,
            size_bytes: 8
        })
    );
    // The last 4 bytes are mapped, the next 4 are not.
    let e = m.read_u64(0x1ffc).unwrap_err();
    assert_eq!(
        e,
        MemError::Unmapped {
            addr: 0x1ffc,
            size_bytes: 8
        }
    );
    assert!(e.to_string().contains("0x1ffc"), "{e}");
    assert!(m.write_u16(0x1fff, 0).is_err());
    assert!(m.read_u8(u64::MAX).is_err());
    assert!(m.read_u64(u64::MAX - 3).is_err());
}

#[test]
fn read_only_regions_reject_stores() {
    let mut m = Memory::new(1 << 20);
    m.map(".rodata", 0x1000, 0x1000, false, false).unwrap();
    m.load_bytes(0x1000, b"abc").unwrap();
    assert_eq!(m.read_u8(0x1001).unwrap(), b'b');
    let e = m.write_u8(0x1001, 0).unwrap_err();
    assert_eq!(
        e,
        MemError::ReadOnly {
            addr: 0x1001,
            region: ".rodata".into()
        }
    );
    assert_eq!(m.read_u8(0x1001).unwrap(), b'b');
}

#[test]
fn mapping_rejects_overlap_and_bad_regions() {
    let mut m = Memory::new(1 << 20);
    m.map("a", 0x1000, 0x1000, true, false).unwrap();
    m.map("b", 0x2000, 0x1000, true, false).unwrap(); // adjacent is fine
    assert!(matches!(
        m.map("c", 0x1fff, 2, true, false),
        Err(MemError::Overlap { .. })
    ));
    assert!(matches!(
        m.map("d", 0x800, 0x1000, true, false),
        Err(MemError::Overlap { .. })
    ));
    assert!(matches!(
        m.map("e", u64::MAX - 10, 100, true, false),
        Err(MemError::BadRegion { .. })
    ));
    assert!(matches!(
        m.map("f", 0x9000, 0, true, false),
        Err(MemError::BadRegion { .. })
    ));
    // An access spanning two adjacent regions works.
    m.write_u64(0x1ffc, 0x1122_3344_5566_7788).unwrap();
    assert_eq!(m.read_u64(0x1ffc).unwrap(), 0x1122_3344_5566_7788);
    assert_eq!(m.region_at(0x2000).unwrap().name, "b");
    assert!(m.region_at(0x3000).is_none());
}

#[test]
fn many_pages_beyond_the_translation_cache() {
    // More pages than the translation cache holds, visited twice, so that
    // entries are evicted and refilled.
    let mut m = Memory::new(64 << 20);
    m.map("d", 0, 8 << 20, true, false).unwrap();
    for round in 0..2u64 {
        for page in 0..2048u64 {
            let addr = page * PAGE_BYTES + (page % 7) * 8;
            if round == 0 {
                m.write_u64(addr, page * 3).unwrap();
            } else {
                assert_eq!(m.read_u64(addr).unwrap(), page * 3);
            }
        }
    }
    assert_eq!(m.touched_bytes(), 2048 * PAGE_BYTES);
}
