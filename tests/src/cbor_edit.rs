//! A small CBOR tree for damaging the bytes of a certificate file on
//! purpose: a canonical file is read into [`Node`]s, one node is replaced
//! (by another value, or by raw bytes that encode it in a way the format
//! forbids), and the tree is written back.
//!
//! Independent of `classcert_format::cbor`, so that the bytes-layer
//! forgeries do not rest on the decoder they test. Only what a certificate
//! file holds is read: integers, byte and text strings, arrays, maps, the
//! bignum tags and the simple values false, true and null.

/// One CBOR data item, as written in the file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Node {
    Uint(u64),
    /// The negative integer `-1 - n`.
    Nint(u64),
    Bytes(Vec<u8>),
    Text(String),
    Array(Vec<Node>),
    Map(Vec<(Node, Node)>),
    Tag(u64, Box<Node>),
    /// A simple value (20 false, 21 true, 22 null).
    Simple(u8),
    /// Bytes written as they are, in place of an item.
    Raw(Vec<u8>),
}

/// Reads one canonical item that fills `bytes` (panics on anything else:
/// the input is a golden certificate).
pub fn parse(bytes: &[u8]) -> Node {
    let mut pos = 0;
    let n = item(bytes, &mut pos);
    assert_eq!(pos, bytes.len(), "one item fills the file");
    n
}

fn head(bytes: &[u8], pos: &mut usize) -> (u8, u64) {
    let b = bytes[*pos];
    *pos += 1;
    let (major, info) = (b >> 5, b & 0x1f);
    let arg = match info {
        0..=23 => u64::from(info),
        24..=27 => {
            let n = 1usize << (info - 24);
            let mut v = 0u64;
            for _ in 0..n {
                v = (v << 8) | u64::from(bytes[*pos]);
                *pos += 1;
            }
            v
        }
        _ => panic!("a golden file has definite lengths only"),
    };
    (major, arg)
}

fn item(bytes: &[u8], pos: &mut usize) -> Node {
    let (major, arg) = head(bytes, pos);
    let take = |pos: &mut usize, n: u64| -> Vec<u8> {
        let s = bytes[*pos..*pos + n as usize].to_vec();
        *pos += n as usize;
        s
    };
    match major {
        0 => Node::Uint(arg),
        1 => Node::Nint(arg),
        2 => Node::Bytes(take(pos, arg)),
        3 => Node::Text(String::from_utf8(take(pos, arg)).expect("UTF-8 text")),
        4 => Node::Array((0..arg).map(|_| item(bytes, pos)).collect()),
        5 => Node::Map(
            (0..arg)
                .map(|_| {
                    let k = item(bytes, pos);
                    let v = item(bytes, pos);
                    (k, v)
                })
                .collect(),
        ),
        6 => Node::Tag(arg, Box::new(item(bytes, pos))),
        _ => Node::Simple(arg as u8),
    }
}

/// The shortest head for major type `major` and argument `arg`.
pub fn head_bytes(major: u8, arg: u64) -> Vec<u8> {
    let m = major << 5;
    if arg < 24 {
        vec![m | arg as u8]
    } else if arg < 0x100 {
        vec![m | 24, arg as u8]
    } else if arg < 0x1_0000 {
        let mut v = vec![m | 25];
        v.extend_from_slice(&(arg as u16).to_be_bytes());
        v
    } else if arg < 0x1_0000_0000 {
        let mut v = vec![m | 26];
        v.extend_from_slice(&(arg as u32).to_be_bytes());
        v
    } else {
        let mut v = vec![m | 27];
        v.extend_from_slice(&arg.to_be_bytes());
        v
    }
}

/// A head one size longer than needed (valid CBOR, not the shortest form).
pub fn long_head(major: u8, arg: u64) -> Vec<u8> {
    let m = major << 5;
    if arg < 0x100 {
        vec![m | 25, 0, arg as u8]
    } else if arg < 0x1_0000 {
        let mut v = vec![m | 26];
        v.extend_from_slice(&(arg as u32).to_be_bytes());
        v
    } else {
        let mut v = vec![m | 27];
        v.extend_from_slice(&arg.to_be_bytes());
        v
    }
}

/// Writes `n` in the canonical form (except for [`Node::Raw`] parts).
pub fn write(n: &Node, out: &mut Vec<u8>) {
    match n {
        Node::Uint(v) => out.extend(head_bytes(0, *v)),
        Node::Nint(v) => out.extend(head_bytes(1, *v)),
        Node::Bytes(b) => {
            out.extend(head_bytes(2, b.len() as u64));
            out.extend_from_slice(b);
        }
        Node::Text(t) => {
            out.extend(head_bytes(3, t.len() as u64));
            out.extend_from_slice(t.as_bytes());
        }
        Node::Array(a) => {
            out.extend(head_bytes(4, a.len() as u64));
            for x in a {
                write(x, out);
            }
        }
        Node::Map(m) => {
            out.extend(head_bytes(5, m.len() as u64));
            for (k, v) in m {
                write(k, out);
                write(v, out);
            }
        }
        Node::Tag(t, x) => {
            out.extend(head_bytes(6, *t));
            write(x, out);
        }
        Node::Simple(s) => out.push(0xe0 | s),
        Node::Raw(r) => out.extend_from_slice(r),
    }
}

pub fn to_bytes(n: &Node) -> Vec<u8> {
    let mut out = Vec::new();
    write(n, &mut out);
    out
}

/// The value under text key `key` of map `n`.
pub fn get_mut<'a>(n: &'a mut Node, key: &str) -> &'a mut Node {
    match n {
        Node::Map(m) => m
            .iter_mut()
            .find(|(k, _)| matches!(k, Node::Text(t) if t == key))
            .map(|(_, v)| v)
            .unwrap_or_else(|| panic!("no key {key}")),
        _ => panic!("not a map"),
    }
}

/// Calls `f` on every node of `n` in pre-order (map keys before their
/// values), with its pre-order index; stops when `f` returns true.
pub fn visit_mut(n: &mut Node, f: &mut dyn FnMut(usize, &mut Node) -> bool) {
    fn go(n: &mut Node, i: &mut usize, f: &mut dyn FnMut(usize, &mut Node) -> bool) -> bool {
        let here = *i;
        *i += 1;
        if f(here, n) {
            return true;
        }
        match n {
            Node::Array(a) => a.iter_mut().any(|x| go(x, i, f)),
            Node::Map(m) => m.iter_mut().any(|(k, v)| go(k, i, f) || go(v, i, f)),
            Node::Tag(_, x) => go(x, i, f),
            _ => false,
        }
    }
    let mut i = 0;
    go(n, &mut i, f);
}

/// The pre-order indices of the nodes of `n` for which `pred` holds.
pub fn find_all(n: &Node, pred: &dyn Fn(&Node) -> bool) -> Vec<usize> {
    let mut n = n.clone();
    let mut out = Vec::new();
    visit_mut(&mut n, &mut |i, x| {
        if pred(x) {
            out.push(i);
        }
        false
    });
    out
}

/// Replaces node `index` (pre-order) of `n` by `f(node)`.
pub fn replace(n: &mut Node, index: usize, f: &mut dyn FnMut(&Node) -> Node) {
    let mut done = false;
    visit_mut(n, &mut |i, x| {
        if i == index {
            *x = f(x);
            done = true;
        }
        done
    });
    assert!(done, "node {index} exists");
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn heads_shortest_and_long() {
        // RFC 8949 §3.1 and appendix A: 23 -> 0x17, 24 -> 0x18 0x18,
        // 1000 -> 0x19 0x03 0xe8 (common practice)
        assert_eq!(head_bytes(0, 23), vec![0x17]);
        assert_eq!(head_bytes(0, 24), vec![0x18, 0x18]);
        assert_eq!(head_bytes(0, 1000), vec![0x19, 0x03, 0xe8]);
        assert_eq!(long_head(0, 1), vec![0x19, 0x00, 0x01]);
        let n = Node::Map(vec![(
            Node::Text("a".into()),
            Node::Array(vec![Node::Uint(1), Node::Nint(0), Node::Simple(22)]),
        )]);
        let b = to_bytes(&n);
        assert_eq!(b, vec![0xa1, 0x61, b'a', 0x83, 0x01, 0x20, 0xf6]);
        assert_eq!(parse(&b), n);
    }
}
