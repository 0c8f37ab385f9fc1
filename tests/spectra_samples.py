"""Synthetic 1H FIDs with known answers, written to disk by nmrglue's own writers.

A signal at shift δ with integral A and line width w is the decaying complex exponential
A·exp(2πi·ν·t − π·w·t), ν = (δ − δ_carrier)·observe: its spectrum is a Lorentzian of area
proportional to A, so the ratio of two integrals is known exactly. A phase error, a
sloped baseline, seeded noise and the delay of Bruker's digital filter (the FID shifted
by GRPDLY points) are added on purpose; the reader must take them all out again.
"""

from __future__ import annotations

import io
import zipfile
from pathlib import Path

import nmrglue as ng
import numpy as np

SW_HZ = 8000.0
BF1_MHZ = 400.0
CARRIER_PPM = 6.0
POINTS = 16384
GRPDLY = 68

#: The worked qNMR example as signals: 1,3,5-trimethoxybenzene's 3H singlet (I = 3.00) at
#: 6.10 ppm, the product's 1H signal (I = 0.62) at 5.30 ppm, and a small CHCl3 residual.
# Source: docs/sources.md, "NMR yield with an internal standard" (Pauli et al., J. Med. Chem. 2014, 57, 9220; from memory).
WORKED = [(6.10, 3.00, 1.0), (5.30, 0.62, 1.0), (7.26, 0.2, 1.0)]


def fid(
    signals=WORKED, phase_deg: float = 35.0, slope: float = 0.05, noise: float = 0.002, seed: int = 1, delay: int = GRPDLY
) -> np.ndarray:
    t = np.arange(POINTS) / SW_HZ
    x = np.zeros(POINTS, complex)
    for ppm, area, width in signals:
        x += area * np.exp(2j * np.pi * (ppm - CARRIER_PPM) * BF1_MHZ * t - np.pi * width * t)
    ramp = slope * np.linspace(-1.0, 1.0, POINTS)  # a sloped baseline, made in the spectrum and taken back to time
    x += np.fft.ifft(np.fft.ifftshift(ramp[::-1]))
    rng = np.random.default_rng(seed)
    x += noise * (rng.standard_normal(POINTS) + 1j * rng.standard_normal(POINTS))
    x *= np.exp(1j * np.deg2rad(phase_deg))
    if delay:
        x = np.concatenate([np.zeros(delay, complex), x[:-delay]])
    return x


def write_bruker(folder: Path, x: np.ndarray, delay: int = GRPDLY) -> Path:
    udic = ng.fileiobase.create_blank_udic(1)
    udic[0].update(size=x.size, complex=True, sw=SW_HZ, obs=BF1_MHZ, car=CARRIER_PPM * BF1_MHZ, label="1H")
    dic = ng.bruker.create_dic(udic)
    o1 = CARRIER_PPM * BF1_MHZ
    dic["acqus"].update(SW_h=SW_HZ, SFO1=BF1_MHZ + o1 / 1e6, BF1=BF1_MHZ, O1=o1, NUC1="1H", DTYPA=2, BYTORDA=0)
    if delay:
        dic["acqus"].update(DECIM=1666, DSPFVS=20, GRPDLY=float(delay))
    dic["acqus"]["TD"] = 2 * x.size
    ng.bruker.write(str(folder), dic, x.astype(np.complex128), overwrite=True)
    return folder


def write_varian(folder: Path, x: np.ndarray) -> Path:
    udic = ng.fileiobase.create_blank_udic(1)
    udic[0].update(size=x.size, complex=True, sw=SW_HZ, obs=BF1_MHZ, car=CARRIER_PPM * BF1_MHZ, label="H1")
    dic = ng.varian.create_dic(udic)
    sfrq = BF1_MHZ + CARRIER_PPM * BF1_MHZ / 1e6
    for key, value in (("sw", SW_HZ), ("sfrq", sfrq), ("reffrq", BF1_MHZ), ("tn", "H1")):
        dic["procpar"][key] = ng.varian.create_pdic_param(key, [str(value)])
    ng.varian.write(str(folder), dic, x.astype(np.complex64), overwrite=True)
    return folder


def zip_folder(folder: Path, inside: str = "exp/1") -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        for p in sorted(folder.iterdir()):
            zf.write(p, f"{inside}/{p.name}")
    return buf.getvalue()


def bruker_zip(tmp: Path, **kw) -> bytes:
    folder = tmp / "bruker-src"
    folder.mkdir(exist_ok=True)
    return zip_folder(write_bruker(folder, fid(**kw)))


def jcamp_fid(x: np.ndarray) -> bytes:
    """A JCAMP-DX 5.01 NTUPLES FID (real and imaginary pages, AFFN numbers), as spectrometer
    software exports one. Source: JCAMP-DX for NMR, Davies & Lampen, Appl. Spectrosc. 1993, 47, 1093 (from memory)."""
    scale = 1e-6
    re_i, im_i = np.round(x.real / scale).astype(np.int64), np.round(x.imag / scale).astype(np.int64)
    n = x.size
    o1 = CARRIER_PPM * BF1_MHZ
    head = [
        "##TITLE= synthetic 1H FID",
        "##JCAMP-DX= 5.01",
        "##DATA TYPE= NMR FID",
        "##DATA CLASS= NTUPLES",
        f"##.OBSERVE FREQUENCY= {BF1_MHZ + o1 / 1e6:.6f}",
        "##.OBSERVE NUCLEUS= ^1H",
        f"##$O1= {o1}",
        f"##$BF1= {BF1_MHZ}",
        f"##$SW_h= {SW_HZ}",
        "##NTUPLES= NMR FID",
        "##VAR_NAME= TIME, FID/REAL, FID/IMAG, PAGE NUMBER",
        "##SYMBOL= X, R, I, N",
        "##VAR_TYPE= INDEPENDENT, DEPENDENT, DEPENDENT, PAGE",
        "##VAR_FORM= AFFN, AFFN, AFFN, AFFN",
        f"##VAR_DIM= {n}, {n}, {n}, 2",
        "##UNITS= SECONDS, ARBITRARY UNITS, ARBITRARY UNITS,",
        f"##FACTOR= {1 / SW_HZ}, {scale}, {scale}, 1",
    ]
    body = []
    for page, symbol, values in ((1, "R", re_i), (2, "I", im_i)):
        body += [f"##PAGE= N={page}", f"##DATA TABLE= (X++({symbol}..{symbol})), XYDATA"]
        body += [" ".join([str(i)] + [str(v) for v in values[i : i + 8]]) for i in range(0, n, 8)]
    tail = ["##END NTUPLES= NMR FID", "##END="]
    return ("\n".join(head + body + tail) + "\n").encode()
