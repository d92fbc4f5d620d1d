//! Rejects: the side file a keep-going import writes its refused rows to, put in place only when
//! the import succeeds. It must not judge rows.

use std::path::{Path, PathBuf};

use csv::ByteRecord;

use crate::exchange::ExchangeError;
use crate::outfile::{Options, OutFile};

/// The column a keep-going import adds to its rejects file; ignored when read back.
pub const REJECT_REASON: &str = "reject_reason";
/// Where the refused rows of a keep-going import go: a side file made on the first refused
/// row and put in place over `path` only when the import succeeds (so an earlier rejects
/// file stays until a new one replaces it, and a failed import leaves none).
pub(super) struct Rejects {
    pub(super) path: PathBuf,
    pub(super) delimiter: u8,
    pub(super) header: ByteRecord,
    pub(super) writer: Option<csv::Writer<OutFile>>,
}

impl Rejects {
    pub(super) fn write(
        &mut self,
        rec: &ByteRecord,
        width: usize,
        reason: &str,
    ) -> Result<(), ExchangeError> {
        let io = |e: csv::Error, path: &Path| ExchangeError::Io {
            path: path.to_path_buf(),
            source: e.into(),
        };
        if self.writer.is_none() {
            let out = OutFile::create(
                &self.path,
                Options {
                    replace: true,
                    devices_in_place: true,
                    can_force: false,
                },
            )?;
            let mut w = csv::WriterBuilder::new()
                .delimiter(self.delimiter)
                .flexible(true)
                .from_writer(out);
            let mut head = self.header.clone();
            head.push_field(b"reject_reason");
            w.write_byte_record(&head).map_err(|e| io(e, &self.path))?;
            self.writer = Some(w);
        }
        if let Some(w) = self.writer.as_mut() {
            let mut row = ByteRecord::new();
            for i in 0..width {
                row.push_field(rec.get(i).unwrap_or(b""));
            }
            row.push_field(reason.as_bytes());
            w.write_byte_record(&row).map_err(|e| io(e, &self.path))?;
        }
        Ok(())
    }

    /// Puts the rejects file in place (when a row was refused).
    pub(super) fn finish(self) -> Result<Option<PathBuf>, ExchangeError> {
        match self.writer {
            Some(w) => {
                let out = w.into_inner().map_err(|e| ExchangeError::Io {
                    path: self.path.clone(),
                    source: e.into_error(),
                })?;
                Ok(Some(out.commit()?))
            }
            None => Ok(None),
        }
    }
}

/// `dir/name.csv` → `dir/name.rejects.csv`.
pub fn rejects_path(path: &Path) -> PathBuf {
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "import".into());
    path.with_file_name(format!("{stem}.rejects.csv"))
}
