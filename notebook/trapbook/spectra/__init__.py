"""1H NMR spectra from the raw data kept as attachments: read, process, integrate, plot.

The only code that imports nmrglue. `readers` turns Bruker, Varian/Agilent and JCAMP-DX
data into one complex FID; `processing` makes the spectrum and records every choice;
`integrate` gives the standard's and product's integrals and the findings about them;
`runs` writes them into a run's qNMR record as a new version; `plot` draws the spectrum
with its regions for reports.
"""

from .integrate import Integration, Region, integrate
from .processing import ProcessedSpectrum, Processing, process
from .readers import RawFID, read_bytes, read_path

__all__ = [
    "Integration",
    "Processing",
    "ProcessedSpectrum",
    "RawFID",
    "Region",
    "integrate",
    "process",
    "read_bytes",
    "read_path",
]
