//! The vocabulary of the application layer's results: the engine's, the importer's, the
//! report's and the benchmarks' types that `app` functions take and hand back, named here so
//! the command line and the desktop app import only `app` (tests/architecture.rs checks it).
//! Types and fixed texts only: no function of a lower layer is re-exported, so no rule can be
//! called around `app`.

pub use crate::exchange::large_shop::Spec as LargeShopSpec;
pub use crate::exchange::mapping::{DateOrder, Mapping, Target as MapTarget, IGNORE};
pub use crate::exchange::{FileKind, ImportSummary};
pub use crate::health::baseline::{BaselineIndicator, BaselineSource};
pub use crate::health::indicators::{Dim, Direction, Kv40Source, Series, Tile};
pub use crate::health::limits::LimitOrigin;
pub use crate::health::plan::{CAUTION_SHORT, SAFETY_CAUTIONS, WALK_ROUND_CAUTION};
pub use crate::health::screen::Record;
pub use crate::health::{Flag, FlagKind, NotJudged, State, SuspectReading, WorkKind};
pub use crate::report::Paper;
pub use crate::sim::score::{Chance, Detection, FaultFigures};
pub use crate::sim::shop::Params as SimParams;
pub use crate::store::roles::ShopRole;

/// Said after the one-line caution beside a form that records work which opened the circuit
/// (a fluid or filter change): who decides how the work is done.
pub const WHO_DECIDES: &str = "The machine builder's instructions, local codes and qualified \
people decide how the work is done.";
