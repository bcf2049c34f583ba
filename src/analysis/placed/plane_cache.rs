//! The plane pairs prepared lately, kept so that an edit that moves no port prepares nothing again.
//!
//! Preparing a plane ([`PreparedPlane::new`]: the static sums between every pair of ports) depends only on the
//! plane's stack-up, the ports' rectangles, the highest frequency and the accuracy: not on any part's value, count
//! or corner. A count drag, a corner, a tolerance vertex, the sensitivity, the droop and the check all ask again for
//! a plane already prepared (`cargo bench --bench placed` gives what preparing costs and what keeping it saves). A
//! plane whose ports differ from a kept one in a single port (a part dropped after a drag on the map) is derived
//! from it by [`PreparedPlane::move_port`], which recomputes that port's row and column only.
//!
//! Every plane given is the fresh preparation to the bit, kept, derived or new (preparation is deterministic, and
//! moving a port takes its pairs in the fresh order); tests/integration/plane_pair.rs checks it. The kept planes
//! are bounded in number ([`KEPT`]) and in memory ([`KEPT_BYTES`]); a plane larger than that is given, not kept.

use crate::physics::plane_pair::{PortRect, PreparedPlane, Stackup};
use std::sync::{Arc, Mutex};

/// How many prepared planes are kept (each is a few hundred kB for 60 ports): the rails of a board at the
/// frequencies their analyses ask for, and the last few layouts of a drag.
const KEPT: usize = 12;

/// The most memory the kept planes take together, bytes ([`PreparedPlane::table_bytes`]).
const KEPT_BYTES: usize = 256 << 20;

/// What a preparation depends on.
#[derive(Debug, Clone, PartialEq)]
struct Key {
    stackup: Stackup,
    ports: Vec<PortRect>,
    f_max_hz: f64,
    tol: f64,
}

/// The kept planes, most recently used last.
static KEPT_PLANES: Mutex<Vec<(Key, Arc<PreparedPlane>)>> = Mutex::new(Vec::new());

/// The plane `stackup` with `ports` prepared for frequencies up to `f_max_hz` to accuracy `tol`: a kept one when
/// it matches, else derived from a kept one that differs in one port, else prepared afresh; kept either way.
pub fn prepared(stackup: Stackup, ports: Vec<PortRect>, f_max_hz: f64, tol: f64) -> Arc<PreparedPlane> {
    let key = Key { stackup, ports, f_max_hz, tol };
    // A poisoned lock only means another thread panicked while holding it; the list itself is always whole.
    let mut kept = KEPT_PLANES.lock().unwrap_or_else(|e| e.into_inner());
    if let Some(i) = kept.iter().position(|(k, _)| *k == key) {
        let entry = kept.remove(i);
        let plane = entry.1.clone();
        kept.push(entry);
        return plane;
    }
    let near = kept.iter().rev().find_map(|(k, plane)| one_port_apart(k, &key).map(|i| (i, plane.clone())));
    // The preparation itself runs without the lock held, so other threads' lookups do not wait on it.
    drop(kept);
    let plane = match near {
        Some((i, from)) => {
            let mut plane = (*from).clone();
            plane.move_port(i, key.ports[i]);
            plane
        }
        None => PreparedPlane::new(key.stackup, key.ports.clone(), key.f_max_hz, key.tol),
    };
    let plane = Arc::new(plane);
    if plane.table_bytes() > KEPT_BYTES {
        return plane;
    }
    let mut kept = KEPT_PLANES.lock().unwrap_or_else(|e| e.into_inner());
    kept.retain(|(k, _)| *k != key);
    kept.push((key, plane.clone()));
    // The least recently used go first, until both bounds hold.
    while kept.len() > KEPT || kept.iter().map(|(_, p)| p.table_bytes()).sum::<usize>() > KEPT_BYTES {
        kept.remove(0);
    }
    plane
}

/// Forget every kept plane (for benchmarks that time a preparation from nothing).
pub fn forget_prepared_planes() {
    KEPT_PLANES.lock().unwrap_or_else(|e| e.into_inner()).clear();
}

/// The one port in which `kept` differs from `wanted`, when they differ in exactly one and agree in all else.
fn one_port_apart(kept: &Key, wanted: &Key) -> Option<usize> {
    if kept.stackup != wanted.stackup
        || kept.f_max_hz != wanted.f_max_hz
        || kept.tol != wanted.tol
        || kept.ports.len() != wanted.ports.len()
    {
        return None;
    }
    let mut differing = kept.ports.iter().zip(&wanted.ports).enumerate().filter(|(_, (a, b))| a != b).map(|(i, _)| i);
    let first = differing.next()?;
    differing.next().is_none().then_some(first)
}
