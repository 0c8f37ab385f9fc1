"""Raw NMR data as spectrometers write it, read with nmrglue into one plain form.

A spectrum arrives as an attachment: a zip of a Bruker experiment folder (``fid`` +
``acqus``) or of a Varian/Agilent one (``fid`` + ``procpar``), or a JCAMP-DX file. Every
reader checks the sizes the parameter files promise against the bytes that are there,
so a truncated or padded-wrong file is refused in words instead of being integrated as
noise. A zip is unpacked only into a fresh temporary folder, member by member, after
refusing absolute paths, ``..`` parts, links and members larger than a raw 1D data set
can be: the bytes of an attachment are data, never a way to write elsewhere on disk.
"""

from __future__ import annotations

import io
import math
import stat
import struct
import tempfile
import warnings
import zipfile
from dataclasses import dataclass, field
from pathlib import Path, PurePosixPath

import numpy as np

from ..errors import SpectrumError

#: Largest member and whole unpacked size of a zipped data set; a 1D FID of 256k complex
#: points is 2 MB, a whole experiment folder with its processed data a few tens of MB.
#: Common practice, no source.
MAX_MEMBER_BYTES = 256 * 1024**2
MAX_UNPACKED_BYTES = 512 * 1024**2
MAX_MEMBERS = 5000
#: Largest JCAMP-DX text accepted: 2^20 complex points as numbers are some 30 MB. Common practice, no source.
MAX_JCAMP_BYTES = 64 * 1024**2
#: Fewest complex points that make a usable 1D spectrum. Common practice, no source.
MIN_POINTS = 64
#: Most complex points of one 1D FID (TD 2M); above is a 2D set or a broken header.
MAX_POINTS = 1 << 20


@dataclass
class RawFID:
    """One complex FID and what is needed to put a ppm axis under its spectrum."""

    fid: np.ndarray
    sw_hz: float
    observe_mhz: float
    carrier_ppm: float
    fmt: str
    nucleus: str | None = None
    #: Bruker digital filter parameters, or None when the data carry none
    digital_filter: dict | None = None
    notes: list[str] = field(default_factory=list)

    def describe(self) -> dict:
        return {
            "format": self.fmt,
            "points": int(self.fid.size),
            "sw_hz": self.sw_hz,
            "observe_mhz": self.observe_mhz,
            "carrier_ppm": self.carrier_ppm,
            "nucleus": self.nucleus,
            "digital_filter": self.digital_filter,
        }


def _refuse(
    what: str, hint: str = "attach the zipped experiment folder (fid + acqus, or fid + procpar) or a JCAMP-DX FID"
) -> SpectrumError:
    return SpectrumError(what, hint, field="attachment")


# --- the entry points ----------------------------------------------------------------------


def read_bytes(data: bytes, name: str = "attachment") -> RawFID:
    """The FID in an attachment's bytes: a zipped Bruker or Varian folder, or JCAMP-DX."""
    if data[:4] == b"PK\x03\x04":
        with tempfile.TemporaryDirectory(prefix="trapbook-nmr-") as tmp:
            folder = unzip_safely(data, Path(tmp), name)
            return read_folder(folder, name)
    head = data[:4096].removeprefix(b"\xef\xbb\xbf").lstrip()  # a UTF-8 byte-order mark may lead a JCAMP-DX file
    if head.startswith(b"##"):
        return read_jcamp_bytes(data, name)
    raise _refuse(f"{name} is not raw NMR data Trapbook can read (not a zip of an experiment folder, not JCAMP-DX)")


def read_path(path: str | Path) -> RawFID:
    """The FID in a folder (Bruker or Varian experiment) or in a zip / JCAMP-DX file."""
    p = Path(path)
    if p.is_dir():
        return read_folder(p, p.name)
    if not p.is_file():
        raise _refuse(f"no file or folder {p}", "give the path of the experiment folder or the zip")
    return read_bytes(p.read_bytes(), p.name)


def read_folder(folder: Path, name: str) -> RawFID:
    """An experiment folder: Bruker when it holds ``acqus``, Varian when it holds ``procpar``."""
    exp = _experiment_folder(folder, name)
    if (exp / "acqus").is_file():
        return _read_bruker(exp, name)
    return _read_varian(exp, name)


def _experiment_folder(folder: Path, name: str) -> Path:
    """The one folder below `folder` holding ``fid`` with ``acqus`` or ``procpar``."""
    found = sorted(
        {
            p.parent
            for p in folder.rglob("fid")
            if p.is_file() and not p.is_symlink() and ((p.parent / "acqus").is_file() or (p.parent / "procpar").is_file())
        }
    )
    if not found:
        raise _refuse(f"{name} holds no experiment: no 'fid' beside an 'acqus' (Bruker) or 'procpar' (Varian/Agilent)")
    if len(found) > 1:
        shown = ", ".join(str(p.relative_to(folder)) for p in found[:5])
        raise _refuse(
            f"{name} holds {len(found)} experiments ({shown}); Trapbook integrates one spectrum per attachment",
            "zip the one experiment folder of this vial's 1H spectrum and attach that",
        )
    return found[0]


# --- zip -----------------------------------------------------------------------------------


def unzip_safely(data: bytes, dest: Path, name: str = "zip") -> Path:
    """Unpack a zip into `dest`, refusing anything that could write outside it or fill the disk."""
    try:
        zf = zipfile.ZipFile(io.BytesIO(data))
    except (zipfile.BadZipFile, OSError, ValueError) as exc:
        raise _refuse(f"{name} is not a readable zip ({exc})") from None
    with zf:
        infos = zf.infolist()
        if len(infos) > MAX_MEMBERS:
            raise _refuse(f"{name} holds {len(infos)} files, more than the {MAX_MEMBERS} of an experiment folder")
        total = 0
        for info in infos:
            _member_path(info, name)  # every member is judged before any is written
            total += info.file_size
            if info.file_size > MAX_MEMBER_BYTES or total > MAX_UNPACKED_BYTES:
                raise _refuse(
                    f"{name}: member '{info.filename}' would unpack to more than a raw 1D data set can be",
                    "attach the experiment folder of the 1H spectrum only",
                )
        for info in infos:
            rel = _member_path(info, name)
            if rel is None or info.is_dir():
                continue
            _copy_member(zf, info, dest.joinpath(*rel.parts), name)
    return dest


def _member_path(info: zipfile.ZipInfo, name: str) -> PurePosixPath | None:
    raw = info.filename.replace("\\", "/")
    mode = info.external_attr >> 16
    if stat.S_ISLNK(mode):
        raise _refuse(f"{name}: member '{info.filename}' is a symbolic link; a data set holds plain files only")
    if raw.startswith("/") or (len(raw) > 1 and raw[1] == ":") or "\x00" in raw:
        raise _refuse(f"{name}: member '{info.filename}' has an absolute path; refused, nothing was unpacked")
    rel = PurePosixPath(raw)
    if any(part == ".." for part in rel.parts):
        raise _refuse(f"{name}: member '{info.filename}' points outside the folder ('..'); refused, nothing was unpacked")
    if raw.startswith("__MACOSX/") or not rel.parts:
        return None
    return rel


def _copy_member(zf: zipfile.ZipFile, info: zipfile.ZipInfo, target: Path, name: str) -> None:
    """Copy one member, counting bytes as they come: a header that lies about its size is caught."""
    written = 0
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
        with zf.open(info) as src, target.open("xb") as out:
            while chunk := src.read(1 << 20):
                written += len(chunk)
                if written > MAX_MEMBER_BYTES:
                    raise _refuse(f"{name}: member '{info.filename}' unpacks to more than its header says")
                out.write(chunk)
    except (zipfile.BadZipFile, EOFError, OSError, NotImplementedError) as exc:
        raise _refuse(f"{name}: member '{info.filename}' cannot be unpacked ({exc})") from None


# --- Bruker --------------------------------------------------------------------------------


def _read_bruker(exp: Path, name: str) -> RawFID:
    import nmrglue as ng

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            acqus = ng.bruker.read_acqus_file(str(exp), ["acqus"])["acqus"]
    except Exception as exc:  # nmrglue raises many kinds on a broken parameter file
        raise _refuse(f"{name}: the Bruker parameter file 'acqus' cannot be read ({type(exc).__name__}: {exc})") from None
    try:
        td = int(acqus["TD"])
        sw = float(acqus["SW_h"])
        sfo1 = float(acqus["SFO1"])
        bf1 = float(acqus.get("BF1", sfo1))
        o1 = float(acqus.get("O1", (sfo1 - bf1) * 1e6))
    except (KeyError, TypeError, ValueError) as exc:
        raise _refuse(f"{name}: 'acqus' lacks or garbles {exc} (TD, SW_h, SFO1 are needed)") from None
    isfloat = int(acqus.get("DTYPA", 0)) == 2
    big = int(acqus.get("BYTORDA", 0)) == 1
    if td % 2:
        raise _refuse(f"{name}: acqus gives TD = {td}, an odd number of points; a complex FID has pairs")
    _check_axis(name, sw, sfo1, td // 2)
    item = 8 if isfloat else 4
    size = (exp / "fid").stat().st_size
    want = td * item
    padded = math.ceil(want / 1024) * 1024  # acquisition software pads to whole blocks
    if size < want or size > padded:
        raise _refuse(
            f"{name}: 'fid' is {size} bytes but acqus promises TD = {td} points ({want} bytes); "
            + ("the file is truncated" if size < want else "the sizes do not belong together"),
            "attach the complete experiment folder again, straight from the spectrometer",
        )
    raw = np.frombuffer((exp / "fid").read_bytes()[:want], dtype=(">" if big else "<") + ("f8" if isfloat else "i4"))
    fid = raw[0::2].astype(np.float64) + 1j * raw[1::2].astype(np.float64)
    filt = None
    if "DECIM" in acqus and "DSPFVS" in acqus:
        filt = {"DECIM": float(acqus["DECIM"]), "DSPFVS": int(acqus["DSPFVS"]), "GRPDLY": float(acqus.get("GRPDLY", -1))}
    nuc = str(acqus.get("NUC1")) if acqus.get("NUC1") else None
    return RawFID(_finite(fid, name), sw, sfo1, o1 / bf1, "bruker", nuc, filt)


def remove_bruker_filter(raw: RawFID) -> np.ndarray:
    """The FID with the group delay of Bruker's digital filter taken out (nmrglue's method)."""
    import nmrglue as ng

    f = raw.digital_filter
    dic = {"acqus": {"DECIM": f["DECIM"], "DSPFVS": f["DSPFVS"], "GRPDLY": f["GRPDLY"]}}
    try:
        return ng.bruker.remove_digital_filter(dic, raw.fid.astype(np.complex128))
    except ValueError as exc:
        raise _refuse(
            f"the Bruker digital filter cannot be removed ({exc})",
            "the acqus file names a DECIM/DSPFVS pair nmrglue does not know; attach data with GRPDLY set",
        ) from None


# --- Varian / Agilent ----------------------------------------------------------------------


def _procpar_value(pdic: dict, key: str) -> float | None:
    try:
        return float(pdic[key]["values"][0])
    except (KeyError, IndexError, TypeError, ValueError):
        return None


def _read_varian(exp: Path, name: str) -> RawFID:
    import nmrglue as ng

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            pdic = ng.varian.read_procpar(str(exp / "procpar"))
    except Exception as exc:  # nmrglue raises many kinds on a broken procpar
        raise _refuse(
            f"{name}: the Varian/Agilent parameter file 'procpar' cannot be read ({type(exc).__name__}: {exc})"
        ) from None
    sw, sfrq = _procpar_value(pdic, "sw"), _procpar_value(pdic, "sfrq")
    if sw is None or sfrq is None:
        raise _refuse(f"{name}: 'procpar' lacks sw or sfrq, which set the ppm axis")
    path = exp / "fid"
    size = path.stat().st_size
    blob = path.read_bytes()
    if size < 32:
        raise _refuse(f"{name}: 'fid' is {size} bytes, shorter than its 32-byte file header")
    nblocks, ntraces, npts, ebytes, tbytes, bbytes, _vers, status, nbheaders = struct.unpack(">6lhhl", blob[:32])
    if nblocks != 1 or ntraces != 1:
        raise _refuse(f"{name}: 'fid' holds {nblocks} blocks of {ntraces} traces; Trapbook integrates one 1D FID")
    if ebytes not in (2, 4) or tbytes != npts * ebytes or nbheaders < 1 or bbytes != tbytes + 28 * nbheaders:
        raise _refuse(
            f"{name}: the 'fid' header sizes do not belong together (np {npts}, {ebytes} bytes each, "
            f"trace {tbytes}, block {bbytes})"
        )
    if size != 32 + nblocks * bbytes:
        raise _refuse(
            f"{name}: 'fid' is {size} bytes but its header promises {32 + nblocks * bbytes}; "
            + ("the file is truncated" if size < 32 + bbytes else "the sizes do not belong together"),
            "attach the complete experiment folder again, straight from the spectrometer",
        )
    isfloat = bool(status & 0x8)
    if npts % 2 or (isfloat and ebytes != 4):
        raise _refuse(
            f"{name}: the 'fid' header says {npts} values of {ebytes} bytes"
            + (" as floats" if isfloat else "")
            + "; a complex FID has pairs of 2- or 4-byte integers or 4-byte floats"
        )
    dtype = ">f4" if isfloat else (">i4" if ebytes == 4 else ">i2")
    start = 32 + 28 * nbheaders
    raw = np.frombuffer(blob[start : start + tbytes], dtype=dtype).astype(np.float64)
    fid = raw[0::2] + 1j * raw[1::2]
    _check_axis(name, sw, sfrq, fid.size)
    reffrq = _procpar_value(pdic, "reffrq")
    carrier = (sfrq - reffrq) * 1e6 / reffrq if reffrq else 0.0
    notes = [] if reffrq else ["procpar has no reffrq: the ppm axis is set by referencing only"]
    nuc = pdic.get("tn", {}).get("values", [None])[0]
    return RawFID(_finite(fid, name), sw, sfrq, carrier, "varian", nuc, None, notes)


# --- JCAMP-DX ------------------------------------------------------------------------------


def read_jcamp_bytes(data: bytes, name: str) -> RawFID:
    """A JCAMP-DX FID (real and imaginary tables). A processed spectrum is refused: the FID is wanted."""
    import nmrglue as ng

    if len(data) > MAX_JCAMP_BYTES:
        raise _refuse(
            f"{name} is {len(data) / 2**20:.0f} MB, far more than a JCAMP-DX 1D FID can be "
            f"(at most {MAX_JCAMP_BYTES // 2**20} MB)"
        )
    with tempfile.TemporaryDirectory(prefix="trapbook-nmr-") as tmp:
        path = Path(tmp) / "data.jdx"
        path.write_bytes(data)
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("error")
                dic, values = ng.jcampdx.read(str(path))
        except Exception as exc:  # nmrglue's parser raises many kinds on a broken file
            raise _refuse(f"{name} is not a readable JCAMP-DX file ({type(exc).__name__}: {exc})") from None
    kind = str(dic.get("DATATYPE", dic.get("DATA TYPE", [""]))[0]).upper()
    if "FID" not in kind:
        raise _refuse(
            f"{name} is a JCAMP-DX file of data type '{kind or 'unknown'}', not an NMR FID",
            "export the FID (DATA TYPE= NMR FID) from the spectrometer software and attach that",
        )
    if not isinstance(values, list) or len(values) != 2 or any(v is None for v in values) or len(values[0]) != len(values[1]):
        raise _refuse(f"{name}: a JCAMP-DX FID needs a real and an imaginary table of the same length")
    fid = np.asarray(values[0], dtype=np.float64) + 1j * np.asarray(values[1], dtype=np.float64)
    obs = _jcamp_float(dic, ".OBSERVEFREQUENCY")
    sw = _jcamp_float(dic, "$SWH") or _jcamp_float(dic, "$SW_H")
    if sw is None:
        first, last = _jcamp_float(dic, "FIRSTX"), _jcamp_float(dic, "LASTX")
        if first is not None and last is not None and fid.size > 1 and last > first:
            sw = (fid.size - 1) / (last - first)  # the x axis is time in seconds
    if obs is None or sw is None:
        raise _refuse(f"{name}: the JCAMP-DX FID lacks .OBSERVE FREQUENCY or the sweep width")
    o1, bf1 = _jcamp_float(dic, "$O1"), _jcamp_float(dic, "$BF1")
    carrier = o1 / bf1 if o1 is not None and bf1 else 0.0
    notes = [] if bf1 else ["the JCAMP-DX file has no $O1/$BF1: the ppm axis is set by referencing only"]
    _check_axis(name, sw, obs, fid.size)
    decim, dspfvs, grpdly = _jcamp_float(dic, "$DECIM"), _jcamp_float(dic, "$DSPFVS"), _jcamp_float(dic, "$GRPDLY")
    filt = (
        {"DECIM": decim, "DSPFVS": int(dspfvs), "GRPDLY": grpdly if grpdly is not None else -1.0}
        if decim is not None and dspfvs is not None
        else None
    )  # a Bruker FID exported as JCAMP-DX keeps its filter
    return RawFID(_finite(fid, name), sw, obs, carrier, "jcamp-dx", None, filt, notes)


def _jcamp_float(dic: dict, key: str) -> float | None:
    want = key.replace(" ", "").replace("_", "").upper()
    for k, v in dic.items():
        if str(k).replace(" ", "").replace("_", "").upper() == want:
            try:
                return float(str(v[0] if isinstance(v, list) else v).strip())
            except (ValueError, IndexError):
                return None
    return None


# --- shared sanity ---------------------------------------------------------------------------


def _check_axis(name: str, sw: float, observe: float, points: int) -> None:
    if not (math.isfinite(sw) and 0 < sw < 1e7):
        raise _refuse(f"{name}: sweep width {sw!r} Hz is not a usable number")
    if not (math.isfinite(observe) and 1 < observe < 2000):
        raise _refuse(f"{name}: spectrometer frequency {observe!r} MHz is not a usable number")
    if not MIN_POINTS <= points <= MAX_POINTS:
        raise _refuse(f"{name}: the FID has {points} complex points; a 1D spectrum needs {MIN_POINTS} to {MAX_POINTS}")


def _finite(fid: np.ndarray, name: str) -> np.ndarray:
    if not np.all(np.isfinite(fid)):
        raise _refuse(f"{name}: the FID holds values that are not numbers (NaN or infinity)")
    if not np.any(fid):
        raise _refuse(f"{name}: the FID is all zeros; the acquisition recorded nothing")
    return fid
