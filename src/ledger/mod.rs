//! ledger (work in progress).
