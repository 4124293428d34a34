"""The published March algorithm library: notation, length, source and the faults the authors claim.

Claims are what each publication states its test detects, in the project's fault-class
abbreviations; they are not measured here (the fault simulator measures coverage). Notes say where
a claim is qualified (e.g. only unlinked faults).
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass

from memcheck.errors import UnknownAlgorithm
from memcheck.march.notation import MarchTest, parse_march

FAULT_CLASSES: dict[str, str] = {
    "SAF": "stuck-at fault",
    "TF": "transition fault",
    "WDF": "write destructive fault",
    "RDF": "read destructive fault",
    "DRDF": "deceptive read destructive fault",
    "IRF": "incorrect read fault",
    "SOF": "stuck-open fault",
    "DRF": "data retention fault",
    "CFst": "state coupling fault",
    "CFds": "disturb coupling fault",
    "CFtr": "transition coupling fault",
    "CFwd": "write destructive coupling fault",
    "CFrd": "read destructive coupling fault",
    "CFdrd": "deceptive read destructive coupling fault",
    "CFir": "incorrect read coupling fault",
    "CFin": "inversion coupling fault",
    "CFid": "idempotent coupling fault",
    "AF": "address decoder fault",
    "dRDF": "dynamic read destructive fault",
    "dDRDF": "dynamic deceptive read destructive fault",
    "dIRF": "dynamic incorrect read fault",
    "dCFds": "dynamic disturb coupling fault",
    "dCFrd": "dynamic read destructive coupling fault",
    "dCFdrd": "dynamic deceptive read destructive coupling fault",
    "dCFir": "dynamic incorrect read coupling fault",
}


@dataclass(frozen=True)
class Source:
    """A publication."""

    authors: str
    title: str
    venue: str
    year: int

    def short(self) -> str:
        """First author's surname (et al.) and year, e.g. ``Hamdioui et al. 2002``."""
        first = re.split(r",| and ", self.authors)[0].strip()
        more = " et al." if ("," in self.authors or " and " in self.authors) else ""
        surname = " ".join(t for t in first.split() if not t.endswith("."))
        return f"{surname}{more} {self.year}"

    def cite(self) -> str:
        return f'{self.authors}, "{self.title}", {self.venue}, {self.year}'


@dataclass(frozen=True)
class MarchAlgorithm:
    """One library entry. ``length`` is operations per word (the k of "kn")."""

    name: str
    notation: str
    length: int
    source: Source
    claims: tuple[str, ...]
    notes: str = ""
    aliases: tuple[str, ...] = ()

    @property
    def test(self) -> MarchTest:
        """The parsed test, named."""
        t = parse_march(self.notation)
        return MarchTest(t.elements, name=self.name)

    @property
    def length_text(self) -> str:
        """Length as published, e.g. ``10n`` or ``23n + 2 delays``."""
        d = self.test.delays
        return f"{self.length}n" + (f" + {d} delay{'s' if d > 1 else ''}" if d else "")


_VDG_BOOK = Source("A.J. van de Goor", "Testing Semiconductor Memories: Theory and Practice", "John Wiley & Sons", 1991)
_SUK_REDDY = Source(
    "D.S. Suk and S.M. Reddy",
    "A March Test for Functional Faults in Semiconductor Random Access Memories",
    "IEEE Transactions on Computers C-30(12)",
    1981,
)

ALGORITHMS: tuple[MarchAlgorithm, ...] = (
    MarchAlgorithm(
        "MATS",
        "{⇕(w0); ⇕(r0,w1); ⇕(r1)}",
        4,
        Source(
            "R. Nair",
            "Comments on 'An Optimal Algorithm for Testing Stuck-at Faults in Random Access Memories'",
            "IEEE Transactions on Computers C-28(3)",
            1979,
        ),
        ("SAF",),
        "Also some address decoder faults, depending on the decoder technology.",
    ),
    MarchAlgorithm(
        "MATS+",
        "{⇕(w0); ⇑(r0,w1); ⇓(r1,w0)}",
        5,
        Source(
            "M.S. Abadir and H.K. Reghbati",
            "Functional Testing of Semiconductor Random Access Memories",
            "ACM Computing Surveys 15(3)",
            1983,
        ),
        ("SAF", "AF"),
        aliases=("mats-plus",),
    ),
    MarchAlgorithm(
        "MATS++", "{⇕(w0); ⇑(r0,w1); ⇓(r1,w0,r0)}", 6, _VDG_BOOK, ("SAF", "AF", "TF"), aliases=("mats-plus-plus",)
    ),
    MarchAlgorithm("March X", "{⇕(w0); ⇑(r0,w1); ⇓(r1,w0); ⇕(r0)}", 6, _VDG_BOOK, ("SAF", "AF", "TF", "CFin")),
    MarchAlgorithm(
        "March Y",
        "{⇕(w0); ⇑(r0,w1,r1); ⇓(r1,w0,r0); ⇕(r0)}",
        8,
        _VDG_BOOK,
        ("SAF", "AF", "TF", "CFin"),
        "Also transition faults linked with inversion coupling faults.",
    ),
    MarchAlgorithm(
        "March C",
        "{⇕(w0); ⇑(r0,w1); ⇑(r1,w0); ⇕(r0); ⇓(r0,w1); ⇓(r1,w0); ⇕(r0)}",
        11,
        Source(
            "M. Marinescu",
            "Simple and Efficient Algorithms for Functional RAM Testing",
            "Proc. IEEE International Test Conference",
            1982,
        ),
        ("SAF", "AF", "TF", "CFin", "CFid", "CFst"),
        "Unlinked coupling faults.",
    ),
    MarchAlgorithm(
        "March C-",
        "{⇕(w0); ⇑(r0,w1); ⇑(r1,w0); ⇓(r0,w1); ⇓(r1,w0); ⇕(r0)}",
        10,
        Source("A.J. van de Goor", "Using March Tests to Test SRAMs", "IEEE Design & Test of Computers 10(1)", 1993),
        ("SAF", "AF", "TF", "CFin", "CFid", "CFst"),
        "March C with its redundant middle read element removed; unlinked coupling faults.",
        aliases=("march-c-minus", "marchc-"),
    ),
    MarchAlgorithm(
        "March A",
        "{⇕(w0); ⇑(r0,w1,w0,w1); ⇑(r1,w0,w1); ⇓(r1,w0,w1,w0); ⇓(r0,w1,w0)}",
        15,
        _SUK_REDDY,
        ("SAF", "AF", "TF", "CFin", "CFid"),
        "Including linked idempotent coupling faults.",
    ),
    MarchAlgorithm(
        "March B",
        "{⇕(w0); ⇑(r0,w1,r1,w0,r0,w1); ⇑(r1,w0,w1); ⇓(r1,w0,w1,w0); ⇓(r0,w1,w0)}",
        17,
        _SUK_REDDY,
        ("SAF", "AF", "TF", "CFin", "CFid"),
        "March A extended so transition faults linked with coupling faults are detected too.",
    ),
    MarchAlgorithm(
        "March U",
        "{⇕(w0); ⇑(r0,w1,r1,w0); ⇑(r0,w1); ⇓(r1,w0,r0,w1); ⇓(r1,w0)}",
        13,
        Source(
            "A.J. van de Goor and G.N. Gaydadjiev",
            "March U: a Test for Unlinked Memory Faults",
            "IEE Proceedings - Circuits, Devices and Systems 144(3)",
            1997,
        ),
        ("SAF", "AF", "TF", "SOF", "CFin", "CFid", "CFst"),
        "Unlinked faults, plus some linked faults.",
    ),
    MarchAlgorithm(
        "March LR",
        "{⇕(w0); ⇓(r0,w1); ⇑(r1,w0,r0,w1); ⇑(r1,w0); ⇑(r0,w1,r1,w0); ⇑(r0)}",
        14,
        Source(
            "A.J. van de Goor, G.N. Gaydadjiev, V.N. Mikitjuk and V.N. Yarmolik",
            "March LR: a Test for Realistic Linked Faults",
            "Proc. IEEE VLSI Test Symposium",
            1996,
        ),
        ("SAF", "AF", "TF", "SOF", "CFin", "CFid", "CFst"),
        "Realistic linked faults among these classes.",
    ),
    MarchAlgorithm(
        "March SR",
        "{⇓(w0); ⇑(r0,w1,r1,w0); ⇑(r0,r0); ⇑(w1); ⇓(r1,w0,r0,w1); ⇓(r1,r1)}",
        14,
        Source(
            "S. Hamdioui and A.J. van de Goor",
            "An Experimental Analysis of Spot Defects in SRAMs: Realistic Fault Models and Tests",
            "Proc. IEEE Asian Test Symposium",
            2000,
        ),
        ("SAF", "TF", "SOF", "IRF", "RDF", "DRDF", "CFst", "CFds", "CFtr", "CFrd", "CFdrd", "CFir"),
        "The realistic faults of the authors' spot-defect analysis.",
    ),
    MarchAlgorithm(
        "March SS",
        "{⇕(w0); ⇑(r0,r0,w0,r0,w1); ⇑(r1,r1,w1,r1,w0); ⇓(r0,r0,w0,r0,w1); ⇓(r1,r1,w1,r1,w0); ⇕(r0)}",
        22,
        Source(
            "S. Hamdioui, A.J. van de Goor and M. Rodgers",
            "March SS: a Test for All Static Simple RAM Faults",
            "Proc. IEEE International Workshop on Memory Technology, Design and Testing",
            2002,
        ),
        ("SAF", "TF", "WDF", "RDF", "DRDF", "IRF", "CFst", "CFds", "CFtr", "CFwd", "CFrd", "CFdrd", "CFir"),
        "All static simple (unlinked) single-cell and two-cell faults.",
    ),
    MarchAlgorithm(
        "March C+",
        "{⇕(w0); ⇑(r0,w1,r1); ⇑(r1,w0,r0); ⇓(r0,w1,r1); ⇓(r1,w0,r0); ⇕(r0)}",
        14,
        Source(
            "R.D. Adams",
            "High Performance Memory Testing: Design Principles, Fault Modeling and Self-Test",
            "Kluwer Academic Publishers",
            2003,
        ),
        ("SAF", "AF", "TF", "CFin", "CFid", "CFst", "SOF"),
        "March C- with a read after every write (value written from memory: notation, source and the "
        "stuck-open claim; the read-back catches a cell that the write cannot reach).",
        aliases=("march-c-plus", "marchc+"),
    ),
    MarchAlgorithm(
        "PMOVI",
        "{⇓(w0); ⇑(r0,w1,r1); ⇑(r1,w0,r0); ⇓(r0,w1,r1); ⇓(r1,w0,r0)}",
        13,
        Source(
            "J.H. de Jonge and A.J. Smeulders",
            "Moving Inversions Test Pattern is Thorough, Yet Speedy",
            "Computer Design",
            1976,
        ),
        ("SAF", "AF", "TF", "CFin"),
        "Moving inversions with a read after every write (value written from memory; claims as "
        "summarised in van de Goor 1991).",
        aliases=("p-movi",),
    ),
    MarchAlgorithm(
        "March LA",
        "{⇕(w0); ⇑(r0,w1,w0,w1,r1); ⇑(r1,w0,w1,w0,r0); ⇓(r0,w1,w0,w1,r1); ⇓(r1,w0,w1,w0,r0); ⇓(r0)}",
        22,
        Source(
            "A.J. van de Goor, G.N. Gaydadjiev, V.G. Mikitjuk and V.N. Yarmolik",
            "March LA: a Test for Linked Memory Faults",
            "Proc. European Design and Test Conference",
            1997,
        ),
        ("SAF", "AF", "TF", "CFin", "CFid", "CFst"),
        "All linked faults among these classes (value written from memory: notation and claims).",
    ),
    MarchAlgorithm(
        "March MSS",
        "{⇕(w0); ⇑(r0,r0,w1,w1); ⇑(r1,r1,w0,w0); ⇓(r0,r0,w1,w1); ⇓(r1,r1,w0,w0); ⇕(r0)}",
        18,
        Source(
            "G. Harutunyan, V.A. Vardanian and Y. Zorian",
            "Minimal March Tests for Unlinked Static Faults in Random Access Memories",
            "Proc. IEEE VLSI Test Symposium",
            2005,
        ),
        ("SAF", "TF", "WDF", "RDF", "DRDF", "IRF", "CFst", "CFds", "CFtr", "CFwd", "CFrd", "CFdrd", "CFir"),
        "All unlinked static single-cell and two-cell faults in 18n, shorter than March SS (value written "
        "from memory: notation and claims).",
    ),
    MarchAlgorithm(
        "March RAW",
        "{⇕(w0); ⇑(r0,w0,r0,r0,w1,r1); ⇑(r1,w1,r1,r1,w0,r0); ⇓(r0,w0,r0,r0,w1,r1); ⇓(r1,w1,r1,r1,w0,r0); ⇕(r0)}",
        26,
        Source(
            "S. Hamdioui, Z. Al-Ars and A.J. van de Goor",
            "Testing Static and Dynamic Faults in Random Access Memories",
            "Proc. IEEE VLSI Test Symposium",
            2002,
        ),
        ("dRDF", "dDRDF", "dIRF", "dCFds", "dCFrd", "dCFdrd", "dCFir"),
        "Read-after-write dynamic faults, single-cell and two-cell (value written from memory: notation and claims).",
    ),
    MarchAlgorithm(
        "March AB",
        "{⇕(w1); ⇓(r1,w0,r0,w0,r0); ⇓(r0,w1,r1,w1,r1); ⇑(r1,w0,r0,w0,r0); ⇑(r0,w1,r1,w1,r1); ⇕(r1)}",
        22,
        Source(
            "A. Benso, A. Bosio, S. Di Carlo, G. Di Natale and P. Prinetto",
            "March AB, March AB1: New March Tests for Unlinked Dynamic Memory Faults",
            "Proc. IEEE International Test Conference",
            2005,
        ),
        ("dRDF", "dDRDF", "dIRF", "dCFds", "dCFrd", "dCFdrd", "dCFir"),
        "Unlinked two-operation dynamic faults (value written from memory: notation and claims).",
    ),
    MarchAlgorithm(
        "March G",
        "{⇕(w0); ⇑(r0,w1,r1,w0,r0,w1); ⇑(r1,w0,w1); ⇓(r1,w0,w1,w0); ⇓(r0,w1,w0); Del; ⇕(r0,w1,r1); Del; ⇕(r1,w0,r0)}",
        23,
        _VDG_BOOK,
        ("SAF", "AF", "TF", "SOF", "CFin", "CFid", "CFst", "DRF"),
        "March B plus stuck-open and data-retention elements; each Del is a pause long enough for a weak "
        "cell to lose its value.",
    ),
)


def _key(name: str) -> str:
    """Compact lookup key: lower case, separators dropped unless they end the name (``March C-``)."""
    return re.sub(r"[\s_-]+(?=\w)", "", name.strip().lower()).replace(" ", "")


def algorithm_names() -> tuple[str, ...]:
    """Library names in library order."""
    return tuple(a.name for a in ALGORITHMS)


def suggest_names(name: str) -> list[str]:
    """Library names close to ``name``: those whose key ends with or contains its key (``C-`` ->
    ``March C-``), then difflib's close matches; at most three."""
    key = _key(name)
    names = algorithm_names()
    out = [n for n in names if key and _key(n).endswith(key)]
    out += [n for n in names if key and len(key) > 1 and key in _key(n) and n not in out]
    out += [n for n in difflib.get_close_matches(name, names, n=3, cutoff=0.5) if n not in out]
    return out[:3]


def get_algorithm(name: str) -> MarchAlgorithm:
    """Look a library entry up by name (case, spaces and ``_`` ignored: ``march-c-``, ``March C-``)."""
    for a in ALGORITHMS:
        if _key(name) in (_key(k) for k in (a.name, *a.aliases)):
            return a
    close = suggest_names(name)
    hint = f" Did you mean {' or '.join(close)}?" if close else ""
    raise UnknownAlgorithm(
        f"{name!r} is not a March algorithm in the library ({', '.join(algorithm_names())}) and not March "
        f"notation.{hint}"
    )


def resolve_test(name_or_notation: str) -> MarchTest:
    """A library name or a notation string, as a test. Names win; text with parentheses is notation."""
    text = name_or_notation.strip()
    try:
        return get_algorithm(text).test
    except UnknownAlgorithm:
        if "(" not in text and "{" not in text and not any(ch in text for ch in "⇑⇓⇕↑↓↕"):
            raise
    return parse_march(text)
