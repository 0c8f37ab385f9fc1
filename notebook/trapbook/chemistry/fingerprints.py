"""Bit strings that let a search skip most molecules before RDKit looks at any of them.

Two kinds are kept per stored structure, both as raw bytes so the store never needs
RDKit to read them back:

- a Morgan fingerprint (radius 2, 2048 bits) for similarity ranking by Tanimoto;
- RDKit's pattern fingerprint (2048 bits) as a substructure screen: every bit set in
  a query's pattern fingerprint is also set in the fingerprint of any molecule that
  contains the query, so a molecule missing one of those bits cannot match and is
  never handed to the (much slower) atom-by-atom matcher.

The molecule itself is also kept, as RDKit's binary form. Confirming a screened candidate
is done by RDKit's substructure library in a worker process with a deadline.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from functools import lru_cache

from rdkit import Chem
from rdkit.Chem import rdFingerprintGenerator

from ..errors import ChemistryError
from . import molecules

MORGAN_RADIUS = 2
MORGAN_BITS = 2048
PATTERN_BITS = 2048
#: Written beside stored fingerprints so a change of either kind can be detected and re-indexed.
SCHEME = f"morgan{MORGAN_RADIUS}-{MORGAN_BITS}/pattern-{PATTERN_BITS}/rdkit-{Chem.rdBase.rdkitVersion}"


@lru_cache(maxsize=1)
def _morgan_generator():
    return rdFingerprintGenerator.GetMorganGenerator(radius=MORGAN_RADIUS, fpSize=MORGAN_BITS)


def _pack(bv) -> bytes:
    """Bit vector → bytes, bit i of the vector at bit (i % 8) of byte i // 8 (numpy's little bit order)."""
    n = bv.GetNumBits()
    out = bytearray(n // 8)
    for i in bv.GetOnBits():
        out[i >> 3] |= 1 << (i & 7)
    return bytes(out)


@dataclass(frozen=True)
class StructureBits:
    """Everything stored for one structure: canonical SMILES, InChIKey and the bit strings."""

    smiles: str
    inchikey: str | None
    morgan: bytes
    pattern: bytes
    mol: bytes


def morgan_bytes(mol: Chem.Mol) -> bytes:
    return _pack(_morgan_generator().GetFingerprint(mol))


def pattern_bytes(mol: Chem.Mol) -> bytes:
    """Pattern fingerprint of a molecule or of a SMARTS query (RDKit handles both)."""
    return _pack(Chem.PatternFingerprint(mol, fpSize=PATTERN_BITS))


def structure_bits(smiles: str) -> StructureBits:
    """Fingerprints of one SMILES; ChemistryError if it does not parse."""
    mol = molecules.parse(smiles)
    return StructureBits(
        smiles=Chem.MolToSmiles(mol, isomericSmiles=True),
        inchikey=molecules.inchikey(smiles),
        morgan=morgan_bytes(mol),
        pattern=pattern_bytes(mol),
        mol=mol.ToBinary(),
    )


def query_pattern(query: Chem.Mol) -> bytes:
    """Screen bits of a substructure query; bits RDKit cannot derive from a query atom stay off."""
    try:
        q = Chem.Mol(query)
        q.UpdatePropertyCache(strict=False)
        Chem.FastFindRings(q)
        return pattern_bytes(q)
    except Exception as exc:  # RDKit raises assorted types on exotic queries
        raise ChemistryError(f"cannot build a substructure screen for this query ({exc})", "simplify the SMARTS") from None


def query_morgan(smiles: str) -> bytes:
    """Morgan bits of a similarity query, which must be a real molecule (SMILES, not SMARTS)."""
    return morgan_bytes(molecules.parse(smiles, "similarity query"))


def _library_matches(smiles: list[str], query: Chem.Mol, threads: int = 0) -> list[int]:
    """Positions of the molecules (canonical SMILES written by RDKit) that contain the query.

    RDKit's substructure library does the parsing and matching in C++ on several threads
    (0 = all cores), which is what keeps a broad query over thousands of screened-in
    molecules within a fraction of a second.
    """
    from rdkit.Chem import rdSubstructLibrary

    holder = rdSubstructLibrary.CachedTrustedSmilesMolHolder()
    for s in smiles:
        holder.AddSmiles(s)
    lib = rdSubstructLibrary.SubstructLibrary(holder)
    try:
        hits = lib.GetMatches(
            query,
            recursionPossible=True,
            useChirality=False,
            useQueryQueryMatches=False,
            numThreads=threads or -1,
            maxResults=len(smiles),
        )
    except Exception as exc:  # RDKit raises assorted types on exotic queries
        raise ChemistryError(f"the substructure match failed ({exc})", "simplify the SMARTS") from None
    return sorted(hits)


def _serve(conn) -> None:
    """The worker process: answer (SMILES, query) requests until the pipe closes.

    Each answer is ("ok", positions) or ("error", (message, hint)), never a silent empty list.
    """
    while True:
        try:
            smiles, query_text = conn.recv()
        except EOFError:
            return
        try:
            conn.send(("ok", _library_matches(smiles, molecules.substructure_query(query_text))))
        except ChemistryError as exc:
            conn.send(("error", (exc.message, exc.hint)))


def _context():
    """fork where the platform has it (RDKit is already loaded: the worker starts in milliseconds), else spawn.

    The worker only runs RDKit's matcher on the data it is handed. Forking a process that
    runs other threads (the terminal UI) could copy a lock another thread holds; the worker
    would then stall, and the deadline stops it and says so. (A fork server or spawn is no
    way out inside the terminal UI: both start a helper that needs a real stderr, which
    Textual replaces while it runs.)
    """
    import multiprocessing

    return multiprocessing.get_context("fork" if "fork" in multiprocessing.get_all_start_methods() else "spawn")


class _Matcher:
    """One worker process kept between queries (starting one per query costs more than most
    matches); a worker stopped at a deadline is killed, and the next query starts a new one."""

    def __init__(self) -> None:
        import threading

        self.lock = threading.Lock()
        self.worker = None
        self.conn = None
        self.owner = os.getpid()  # a process forked from this one starts its own worker

    def _start(self) -> None:
        self.owner = os.getpid()
        ctx = _context()
        self.conn, theirs = ctx.Pipe()
        self.worker = ctx.Process(target=_serve, args=(theirs,), daemon=True, name="trapbook-substructure")
        self.worker.start()
        theirs.close()

    def _stop(self) -> None:
        if self.worker is not None and self.worker.is_alive():
            self.worker.kill()
        if self.worker is not None:
            self.worker.join()
        if self.conn is not None:
            self.conn.close()
        self.worker = self.conn = None

    def match(self, smiles: list[str], query_text: str, time_limit_s: float) -> tuple[str, object]:
        with self.lock:
            if self.owner != os.getpid():
                self.worker = self.conn = None
            if self.worker is None or not self.worker.is_alive():
                self._stop()
                self._start()
            try:
                self.conn.send((smiles, query_text))
                if not self.conn.poll(time_limit_s):
                    self._stop()
                    return "timeout", None
                return self.conn.recv()
            except (EOFError, OSError):
                code = self.worker.exitcode if self.worker is not None else None
                self._stop()
                return "crashed", code


_MATCHER = _Matcher()


def matching_indices(smiles: list[str], query_text: str, time_limit_s: float) -> list[int]:
    """Positions of the molecules that contain the query, found within time_limit_s seconds.

    RDKit's matcher cannot be interrupted, and a crafted pattern (many wildcard atoms that
    nearly fit a large, symmetric molecule) makes it backtrack for minutes. So the match
    runs in a worker process that is killed at the deadline, and the caller gets a
    ChemistryError saying the query was stopped — never a partial or empty answer. (The
    limit itself is checked where a query is read: search_query.check_time_limit.)
    """
    if not smiles:
        return []
    status, payload = _MATCHER.match(smiles, query_text, time_limit_s)
    if status == "ok":
        return payload
    if status == "timeout":
        shown = query_text if len(query_text) <= 60 else query_text[:57] + "..."
        raise ChemistryError(
            f"query stopped after {time_limit_s:g} s: matching '{shown}' against {len(smiles)} stored structures took too long",
            "narrow the pattern (fewer wildcard atoms * and bonds ~, more specific atoms), add a condition, "
            "or allow more time (search --time-limit)",
            field="substructure",
            got=query_text,
        )
    if status == "crashed":
        raise ChemistryError(
            f"the substructure matcher stopped without an answer (exit code {payload})",
            "try the query again; if it keeps failing, simplify the SMARTS",
        )
    raise ChemistryError(*payload)
