//! The monthly operating report as a PDF (placeholder until the PDF writer is added).

use super::report::Report;

pub fn pdf(_: &Report) -> super::Result<Vec<u8>> {
    Err(super::Error::new(
        super::ErrorKind::InvalidEntry,
        "the PDF report is not available in this build",
    ))
}
