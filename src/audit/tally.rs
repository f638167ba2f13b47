//! The audit's partitions, built in one pass over the entries in chain
//! order (as the verify walk hands them over) from each entry's meta and
//! the few fields of its body the audit shows (see [`super::body`]).
//!
//! Invariant: on a ledger that verifies, [`Tally::finish`] gives the same
//! partitions as the full read in `report.rs` (every entry fetched and
//! parsed whole): the same grouping (by partition, in the order of each
//! partition's first entry), the same lines, and the same count of
//! candidates compared before each opening, which in chain order is the
//! number of distinct ids seen in the partition's selections so far.

use std::collections::{BTreeMap, HashMap, HashSet};

use crate::ledger::{EntryKind, EntryMeta, RowExposure, timestamp_text};

use super::body::{Body, text};
use super::report::{OpeningLine, PartitionAudit, SelectionLine};

/// The partitions seen so far.
#[derive(Debug, Default)]
pub struct Tally {
    /// Only entries of this data file count (an audit for a plan).
    data_file: Option<String>,
    partitions: HashMap<String, Building>,
    /// A body did not read: the full read must do the audit.
    failed: bool,
}

/// One partition while its entries come in.
#[derive(Debug)]
struct Building {
    first_seq: u64,
    partition: String,
    data_file: String,
    openings: Vec<OpeningLine>,
    selections: Vec<SelectionLine>,
    /// Distinct ids compared so far; only their number is shown.
    compared: HashSet<String>,
    /// Sequence number of the latest opening.
    last_opening: Option<u64>,
    /// `sealed_rows` of the latest selection's body.
    last_selection_rows: Option<u64>,
}

impl Tally {
    /// A tally of every partition, or of those of `data_file` only.
    pub fn new(data_file: Option<&str>) -> Self {
        Tally {
            data_file: data_file.map(str::to_string),
            ..Tally::default()
        }
    }

    /// Count one entry; entries must come in chain order.
    pub fn add(&mut self, meta: &EntryMeta, body: &str) {
        if self
            .data_file
            .as_ref()
            .is_some_and(|d| *d != meta.data_file)
        {
            return;
        }
        let Ok(body) = Body::read(body) else {
            self.failed = true;
            return;
        };
        if !self.partitions.contains_key(&meta.partition) {
            let first = Building::new(meta);
            self.partitions.insert(meta.partition.clone(), first);
        }
        if let Some(b) = self.partitions.get_mut(&meta.partition) {
            match meta.kind {
                EntryKind::Selection => b.selection(meta, &body),
                EntryKind::Opening => b.opening(meta, &body),
            }
        }
    }

    /// The partitions in the order of their first entries, with the
    /// exposure of the rows of each one's latest opening; `None` when a
    /// body or an opening's rows did not read.
    pub fn finish(self, exposure: &RowExposure) -> Option<Vec<PartitionAudit>> {
        if self.failed {
            return None;
        }
        let mut parts: Vec<Building> = self.partitions.into_values().collect();
        parts.sort_by_key(|b| b.first_seq);
        let audits = parts.into_iter().map(|b| b.finish(exposure));
        audits.collect()
    }
}

impl Building {
    fn new(first: &EntryMeta) -> Self {
        Building {
            first_seq: first.seq,
            partition: first.partition.clone(),
            data_file: first.data_file.clone(),
            openings: Vec::new(),
            selections: Vec::new(),
            compared: HashSet::new(),
            last_opening: None,
            last_selection_rows: None,
        }
    }

    fn selection(&mut self, m: &EntryMeta, body: &Body<'_>) {
        let counted = || body.candidates.iter().flatten().filter(|c| !c.reference);
        for c in counted() {
            let id = c.id.as_deref().unwrap_or_default();
            if !self.compared.contains(id) {
                self.compared.insert(id.to_string());
            }
        }
        self.selections.push(SelectionLine {
            seq: m.seq,
            timestamp: timestamp_text(&m.timestamp),
            user: m.provenance.user.clone(),
            plan_hash: m.plan_hash.clone(),
            candidates: counted().count(),
            chosen_label: text(&body.chosen_label),
        });
        self.last_selection_rows = body.sealed_rows;
    }

    fn opening(&mut self, m: &EntryMeta, body: &Body<'_>) {
        self.openings.push(OpeningLine {
            seq: m.seq,
            hash: m.hash.clone(),
            timestamp: timestamp_text(&m.timestamp),
            user: m.provenance.user.clone(),
            host: m.provenance.host.clone(),
            plan_hash: m.plan_hash.clone(),
            candidate: text(&body.candidate),
            candidate_label: text(&body.candidate_label),
            metric: text(&body.metric),
            score: body.score,
            reason: text(&body.reason),
            candidates_compared_before: self.compared.len(),
        });
        self.last_opening = Some(m.seq);
    }

    /// The partition's rows are those of its latest opening, as the walk
    /// read them; without an opening, the latest selection says how many
    /// rows it sealed, none of them looked at yet. `None` when the
    /// opening's rows did not decode.
    fn finish(self, exposure: &RowExposure) -> Option<PartitionAudit> {
        let mut by: BTreeMap<u32, usize> = BTreeMap::new();
        let sealed_rows = match self.last_opening {
            Some(seq) => {
                let mut n = 0;
                for (row, copies) in exposure.entry_rows(seq)? {
                    *by.entry(exposure.openings(row)).or_insert(0) += copies as usize;
                    n += copies as usize;
                }
                n
            }
            None => self.last_selection_rows.unwrap_or(0) as usize,
        };
        if self.last_opening.is_none() && sealed_rows > 0 {
            by.insert(0, sealed_rows);
        }
        Some(PartitionAudit {
            partition: self.partition,
            data_file: self.data_file,
            sealed_rows,
            openings: self.openings,
            rows_by_openings: by,
            selections: self.selections,
        })
    }
}
