"""Spectrum notation, J values, term symbols, configurations and level labels.

Conventions of the trade (no single paper; the notation of atomic spectroscopy
textbooks such as Cowan, *The Theory of Atomic Structure and Spectra*, 1981):

* a spectrum is an element symbol and a Roman numeral one more than the ion
  charge: ``H I`` (neutral hydrogen), ``He II`` (He+), ``U XCII`` (U91+);
  ion notation ``C+5``, ``C5+``, ``C^5+`` is accepted on input. ``D`` and ``T``
  stand for hydrogen-2 and hydrogen-3.
* J is stored as the integer ``two_j`` = 2J.
* an LS term is multiplicity 2S+1, an L letter and ``°`` for odd parity
  (``2P°``; ``o`` is accepted on input).
* a configuration lists subshells ``n l^k`` separated by ``.`` (``1s2.2s2.2p6.3s``);
  a noble-gas core in brackets (``[Ne].3s``) is accepted.

Beyond the letters in use (l <= 19, L <= 19) this module writes the number in
brackets, ``45[27]`` for n = 45, l = 27; ``2[27]`` for a doublet with L = 27.
"""

from __future__ import annotations

import functools
import math
import re
from dataclasses import dataclass
from fractions import Fraction

from levels.errors import NotationError

#: element symbols, index = Z (index 0 unused)
ELEMENTS: tuple[str, ...] = (
    "",
    "H", "He", "Li", "Be", "B", "C", "N", "O", "F", "Ne",
    "Na", "Mg", "Al", "Si", "P", "S", "Cl", "Ar", "K", "Ca",
    "Sc", "Ti", "V", "Cr", "Mn", "Fe", "Co", "Ni", "Cu", "Zn",
    "Ga", "Ge", "As", "Se", "Br", "Kr", "Rb", "Sr", "Y", "Zr",
    "Nb", "Mo", "Tc", "Ru", "Rh", "Pd", "Ag", "Cd", "In", "Sn",
    "Sb", "Te", "I", "Xe", "Cs", "Ba", "La", "Ce", "Pr", "Nd",
    "Pm", "Sm", "Eu", "Gd", "Tb", "Dy", "Ho", "Er", "Tm", "Yb",
    "Lu", "Hf", "Ta", "W", "Re", "Os", "Ir", "Pt", "Au", "Hg",
    "Tl", "Pb", "Bi", "Po", "At", "Rn", "Fr", "Ra", "Ac", "Th",
    "Pa", "U", "Np", "Pu", "Am", "Cm", "Bk", "Cf", "Es", "Fm",
    "Md", "No", "Lr", "Rf", "Db", "Sg", "Bh", "Hs", "Mt", "Ds",
    "Rg", "Cn", "Nh", "Fl", "Mc", "Lv", "Ts", "Og",
)
Z_MAX = len(ELEMENTS) - 1
_Z_OF = {symbol: z for z, symbol in enumerate(ELEMENTS) if symbol}
#: hydrogen isotopes written with their own symbol
ISOTOPE_SYMBOLS = {"D": (1, 2), "T": (1, 3)}

#: orbital letters for l = 0..19 (lower case; term letters are upper case)
L_LETTERS = "spdfghiklmnoqrtuvwxy"
_L_OF = {letter: l for l, letter in enumerate(L_LETTERS)}

_ROMAN = (
    (100, "C"), (90, "XC"), (50, "L"), (40, "XL"), (10, "X"), (9, "IX"),
    (5, "V"), (4, "IV"), (1, "I"),
)


def element_symbol(z: int) -> str:
    """Symbol of element ``z`` (1..118)."""
    if not isinstance(z, int) or not 1 <= z <= Z_MAX:
        raise NotationError(f"atomic number {z!r} is outside 1..{Z_MAX}")
    return ELEMENTS[z]


def atomic_number(symbol: str) -> int:
    """Atomic number of an element symbol (case as written: ``Fe``, not ``FE``)."""
    if symbol in _Z_OF:
        return _Z_OF[symbol]
    if symbol in ISOTOPE_SYMBOLS:
        return ISOTOPE_SYMBOLS[symbol][0]
    raise NotationError(f"unknown element symbol {symbol!r}")


def to_roman(number: int) -> str:
    """Roman numeral of a positive integer (``92`` -> ``XCII``)."""
    if not isinstance(number, int) or number < 1 or number > 399:
        raise NotationError(f"spectrum number {number!r} is outside 1..399")
    out = []
    for value, letters in _ROMAN:
        while number >= value:
            out.append(letters)
            number -= value
    return "".join(out)


def from_roman(text: str) -> int:
    """Integer of a canonical Roman numeral; non-canonical forms (``IIII``) are refused."""
    if not text or any(ch not in "IVXLC" for ch in text):
        raise NotationError(f"{text!r} is not a Roman numeral")
    total, i = 0, 0
    for value, letters in _ROMAN:
        while text.startswith(letters, i):
            total += value
            i += len(letters)
    if i != len(text) or total == 0 or to_roman(total) != text:
        raise NotationError(f"{text!r} is not a canonical Roman numeral")
    return total


@dataclass(frozen=True, order=True)
class Spectrum:
    """An atom or ion: atomic number and charge, optionally one isotope.

    ``mass_number`` is ``None`` when not given (the store then takes the most
    abundant isotope); ``D`` and ``T`` set it to 2 and 3.
    """

    z: int
    charge: int
    mass_number: int | None = None

    def __post_init__(self) -> None:
        if not isinstance(self.z, int) or not 1 <= self.z <= Z_MAX:
            raise NotationError(f"atomic number {self.z!r} is outside 1..{Z_MAX}")
        if not isinstance(self.charge, int) or not 0 <= self.charge <= self.z - 1:
            raise NotationError(
                f"charge {self.charge!r} is outside 0..{self.z - 1} for {ELEMENTS[self.z]} "
                "(a species must keep at least one electron)"
            )
        if self.mass_number is not None and (
            not isinstance(self.mass_number, int) or not self.z <= self.mass_number <= 300
        ):
            raise NotationError(f"mass number {self.mass_number!r} is impossible for Z = {self.z}")

    @property
    def electrons(self) -> int:
        """Number of bound electrons."""
        return self.z - self.charge

    @property
    def symbol(self) -> str:
        """Element symbol, ``D``/``T`` for hydrogen-2/3."""
        if self.z == 1 and self.mass_number in (2, 3):
            return "D" if self.mass_number == 2 else "T"
        return ELEMENTS[self.z]

    @property
    def name(self) -> str:
        """Spectrum notation, ``He II``."""
        return f"{self.symbol} {to_roman(self.charge + 1)}"

    @property
    def isotope_name(self) -> str:
        """Spectrum notation with the mass number when one is set: ``He II A=3``, ``D I``."""
        if self.mass_number is None or self.symbol in ("D", "T"):
            return self.name
        return f"{self.name} A={self.mass_number}"

    @property
    def url_name(self) -> str:
        """Spectrum notation with ``_`` for the space, for URLs (``He_II``)."""
        return self.name.replace(" ", "_")

    def __str__(self) -> str:
        return self.name


_SPECTRUM_ROMAN = re.compile(r"^([A-Z][a-z]?)[ _]+([IVXLC]+)$")
_SPECTRUM_ION = re.compile(r"^([A-Z][a-z]?)(?:\^?([+-])([0-9]*)|\^?([0-9]+)([+-]))?$")


def parse_spectrum(text: str) -> Spectrum:
    """Parse spectrum or ion notation.

    Parameters
    ----------
    text : str
        ``"H I"``, ``"He II"``, ``"Fe XXVI"``, ``"U XCII"``, ``"He_II"``,
        ``"C+5"``, ``"C5+"``, ``"C^5+"``, ``"Na"`` (neutral), ``"D I"``.
        An isotope is named by a mass-number prefix or suffix: ``"3He II"``,
        ``"He II A=3"``, ``"13C5+"``.

    Returns
    -------
    Spectrum

    Raises
    ------
    NotationError
        Naming the offending part (unknown symbol, bad numeral, impossible charge).

    Examples
    --------
    >>> parse_spectrum("C5+").name
    'C VI'
    >>> parse_spectrum("U XCII")
    Spectrum(z=92, charge=91, mass_number=None)
    >>> parse_spectrum("He II A=3")
    Spectrum(z=2, charge=1, mass_number=3)
    >>> parse_spectrum("3He II").isotope_name
    'He II A=3'
    """
    if not isinstance(text, str):
        raise NotationError(f"spectrum must be text, got {type(text).__name__}")
    return _parse_spectrum_text(text)


@functools.lru_cache(maxsize=4096)
def _parse_spectrum_text(text: str) -> Spectrum:
    """:func:`parse_spectrum` of a string, cached (files repeat the same few spectra on every row)."""
    stripped = text.strip()
    if not stripped:
        raise NotationError("empty spectrum; write it like 'He II' or 'C5+'")
    stripped, mass_number = _split_mass_number(stripped, text)
    spectrum = _parse_charge_state(stripped, text)
    if mass_number is None:
        return spectrum
    if spectrum.mass_number is not None and spectrum.mass_number != mass_number:
        raise NotationError(f"spectrum {text!r}: {spectrum.symbol} is hydrogen-{spectrum.mass_number}, "
                            f"not A = {mass_number}")
    return _make_spectrum(spectrum.z, spectrum.charge, mass_number, text)


_MASS_SUFFIX = re.compile(r"^(.*?)\s+A\s*=\s*([0-9]+)$")
_MASS_PREFIX = re.compile(r"^([0-9]+)([A-Z].*)$")


def _split_mass_number(stripped: str, text: str) -> tuple[str, int | None]:
    """Take an isotope off spectrum notation: ``'He II A=3'`` or ``'3He II'`` -> ``('He II', 3)``."""
    suffix = _MASS_SUFFIX.match(stripped)
    prefix = _MASS_PREFIX.match(stripped)
    if suffix and prefix:
        raise NotationError(f"spectrum {text!r}: give the mass number once ('3He II' or 'He II A=3')")
    if suffix:
        return suffix.group(1).strip(), int(suffix.group(2))
    if prefix:
        return prefix.group(2), int(prefix.group(1))
    return stripped, None


def _parse_charge_state(stripped: str, text: str) -> Spectrum:
    """Parse ``He II`` / ``C5+`` notation without an isotope part."""
    match = _SPECTRUM_ROMAN.match(stripped)
    if match:
        symbol, numeral = match.groups()
        z, mass = _symbol_z_mass(symbol, text)
        try:
            number = from_roman(numeral)
        except NotationError as exc:
            raise NotationError(f"spectrum {text!r}: {exc}") from None
        return _make_spectrum(z, number - 1, mass, text)
    match = _SPECTRUM_ION.match(stripped)
    if match:
        symbol, sign_a, digits_a, digits_b, sign_b = match.groups()
        z, mass = _symbol_z_mass(symbol, text)
        if sign_a is not None:
            sign, digits = sign_a, digits_a
        elif sign_b is not None:
            sign, digits = sign_b, digits_b
        else:
            return _make_spectrum(z, 0, mass, text)
        if sign == "-":
            raise NotationError(f"spectrum {text!r}: negative ions are not supported")
        charge = int(digits) if digits else 1
        return _make_spectrum(z, charge, mass, text)
    raise NotationError(
        f"{text!r} is not spectrum notation; write it like 'He II', 'Fe XXVI' or 'C5+'"
    )


def _symbol_z_mass(symbol: str, text: str) -> tuple[int, int | None]:
    if symbol in ISOTOPE_SYMBOLS:
        return ISOTOPE_SYMBOLS[symbol]
    if symbol in _Z_OF:
        return _Z_OF[symbol], None
    raise NotationError(f"spectrum {text!r}: unknown element symbol {symbol!r}")


def _make_spectrum(z: int, charge: int, mass: int | None, text: str) -> Spectrum:
    try:
        return Spectrum(z, charge, mass)
    except NotationError as exc:
        raise NotationError(f"spectrum {text!r}: {exc}") from None


def format_spectrum(z: int, charge: int, mass_number: int | None = None) -> str:
    """Spectrum notation of (Z, charge): ``format_spectrum(26, 25)`` -> ``'Fe XXVI'``."""
    return Spectrum(z, charge, mass_number).name


# ----------------------------------------------------------------- J values

def parse_j(text: str | float | int) -> int:
    """Parse a J value and return ``two_j`` = 2J.

    Accepts ``"3/2"``, ``"1.5"``, ``"2"``, ``1.5``. A value that is not a
    non-negative whole or half integer raises :class:`NotationError`
    (``'5/3' is not a whole or half-integer``).

    Examples
    --------
    >>> parse_j("3/2"), parse_j("1.5"), parse_j("0")
    (3, 3, 0)
    """
    if isinstance(text, bool):
        raise NotationError(f"{text!r} is not a J value")
    if isinstance(text, float) and not math.isfinite(text):
        raise NotationError(f"{text!r} is not a J value")
    if isinstance(text, (int, float)):
        raw = repr(text)
        value = Fraction(text).limit_denominator(1000) if isinstance(text, float) else Fraction(text)
        if isinstance(text, float) and float(value) != text:
            raise NotationError(f"{raw!r} is not a whole or half-integer")
    else:
        raw = text.strip()
        if raw.startswith("-"):
            raise NotationError(f"{raw!r}: J cannot be negative")
        try:
            if "/" in raw:
                num, den = raw.split("/", 1)
                if not re.fullmatch(r"[0-9]+", num.strip()) or not re.fullmatch(r"[0-9]+", den.strip()):
                    raise ValueError
                value = Fraction(int(num), int(den))
            else:
                if not re.fullmatch(r"[0-9]+(\.[0-9]*)?|\.[0-9]+", raw):
                    raise ValueError
                value = Fraction(raw)
        except (ValueError, ZeroDivisionError):
            raise NotationError(f"{raw!r} is not a J value (write 3/2, 1.5 or 2)") from None
    if value < 0:
        raise NotationError(f"{raw!r}: J cannot be negative")
    doubled = value * 2
    if doubled.denominator != 1:
        raise NotationError(f"{raw!r} is not a whole or half-integer")
    return int(doubled)


def format_j(two_j: int) -> str:
    """Text of J from ``two_j``: 3 -> ``'3/2'``, 4 -> ``'2'``."""
    if not isinstance(two_j, int) or isinstance(two_j, bool) or two_j < 0:
        raise NotationError(f"two_j {two_j!r} must be a non-negative integer")
    return str(two_j // 2) if two_j % 2 == 0 else f"{two_j}/2"


# ----------------------------------------------------------------- terms

@dataclass(frozen=True)
class Term:
    """An LS term: multiplicity 2S+1, total orbital L, parity (+1 even, -1 odd)."""

    multiplicity: int
    L: int
    parity: int

    def __post_init__(self) -> None:
        if not isinstance(self.multiplicity, int) or self.multiplicity < 1:
            raise NotationError(f"multiplicity {self.multiplicity!r} must be a positive integer")
        if not isinstance(self.L, int) or self.L < 0:
            raise NotationError(f"L {self.L!r} must be a non-negative integer")
        if self.parity not in (1, -1):
            raise NotationError(f"parity {self.parity!r} must be +1 or -1")

    @property
    def two_s(self) -> int:
        """2S = multiplicity - 1."""
        return self.multiplicity - 1

    def allows_two_j(self, two_j: int) -> bool:
        """Whether J is one of |L-S| .. L+S."""
        two_l = 2 * self.L
        return abs(two_l - self.two_s) <= two_j <= two_l + self.two_s and (two_j - two_l - self.two_s) % 2 == 0

    def __str__(self) -> str:
        return format_term(self)


def l_letter(l: int, upper: bool = False) -> str:
    """Letter of orbital angular momentum ``l`` (``3`` -> ``'f'``), bracketed past 19."""
    if not isinstance(l, int) or l < 0:
        raise NotationError(f"l {l!r} must be a non-negative integer")
    if l < len(L_LETTERS):
        letter = L_LETTERS[l]
        return letter.upper() if upper else letter
    return f"[{l}]"


def _l_from_letter(text: str, context: str) -> int:
    lower = text.lower()
    if lower in _L_OF:
        return _L_OF[lower]
    match = re.fullmatch(r"\[([0-9]+)\]", text)
    if match:
        return int(match.group(1))
    raise NotationError(f"{context}: {text!r} is not an orbital letter ({L_LETTERS})")


_TERM = re.compile(r"^([0-9]+)([A-Z]|\[[0-9]+\])(°|o|\*)?$")


def parse_term(text: str) -> Term | None:
    """Parse an LS term (``2P``, ``3D°``, ``2Po``); blank text gives ``None``.

    Examples
    --------
    >>> parse_term("2P°")
    Term(multiplicity=2, L=1, parity=-1)
    >>> str(parse_term("3Do"))
    '3D°'
    """
    if not isinstance(text, str):
        raise NotationError(f"term must be text, got {type(text).__name__}")
    stripped = text.strip()
    if not stripped:
        return None
    match = _TERM.match(stripped)
    if not match:
        raise NotationError(
            f"{text!r} is not an LS term; write multiplicity, L letter and ° for odd parity, like '2P°'"
        )
    mult, letter, odd = match.groups()
    if letter == "J":
        raise NotationError(f"term {text!r}: J is not an L letter")
    L = _l_from_letter(letter, f"term {text!r}")
    return Term(int(mult), L, -1 if odd else 1)


def format_term(term: Term | JKTerm | None) -> str:
    """Text of a term with the trade's ``°`` on odd parity; ``None`` gives ``''``; jK terms as ``2[5/2]°``."""
    if term is None:
        return ""
    if isinstance(term, JKTerm):
        return str(term)
    return f"{term.multiplicity}{l_letter(term.L, upper=True)}{'°' if term.parity == -1 else ''}"


# ----------------------------------------------------------------- jK (Racah) terms

@dataclass(frozen=True)
class JKTerm:
    """A jK-coupled (Racah) term ``2[5/2]°``: the outer electron's 2s+1, 2K, parity.

    In jK coupling the parent's total angular momentum j couples with the outer
    electron's l to K, and K with the outer electron's spin to J = K +- 1/2 (Racah
    1942, Phys. Rev. 61, 537). The parent term with its J is written in the
    configuration: ``2p5(2P°3/2)3p``.
    """

    multiplicity: int
    two_k: int
    parity: int

    def __post_init__(self) -> None:
        if not isinstance(self.multiplicity, int) or self.multiplicity < 1:
            raise NotationError(f"multiplicity {self.multiplicity!r} must be a positive integer")
        if not isinstance(self.two_k, int) or self.two_k < 0:
            raise NotationError(f"2K {self.two_k!r} must be a non-negative integer")
        if self.parity not in (1, -1):
            raise NotationError(f"parity {self.parity!r} must be +1 or -1")

    @property
    def two_s(self) -> int:
        """2s of the outer electron(s) = multiplicity - 1."""
        return self.multiplicity - 1

    def allows_two_j(self, two_j: int) -> bool:
        """Whether J is one of |K-s| .. K+s."""
        return (abs(self.two_k - self.two_s) <= two_j <= self.two_k + self.two_s
                and (two_j - self.two_k - self.two_s) % 2 == 0)

    def __str__(self) -> str:
        return f"{self.multiplicity}[{format_j(self.two_k)}]{'°' if self.parity == -1 else ''}"


_JK_TERM = re.compile(r"^([0-9]+)\[([0-9]+(?:/2)?)\](°|o|\*)?$")


def parse_jk_term(text: str) -> JKTerm | None:
    """Parse a jK term (``2[5/2]``, ``2[3/2]°``, ``2[1/2]o``); blank text gives ``None``.

    An integer K is read as jK only up to 19: ``2[27]`` stays the LS term with L = 27
    (this module's notation for L letters beyond the alphabet).

    Examples
    --------
    >>> parse_jk_term("2[5/2]")
    JKTerm(multiplicity=2, two_k=5, parity=1)
    >>> str(parse_jk_term("2[3/2]o"))
    '2[3/2]°'
    """
    if not isinstance(text, str):
        raise NotationError(f"term must be text, got {type(text).__name__}")
    stripped = text.strip()
    if not stripped:
        return None
    match = _JK_TERM.match(stripped)
    if not match or ("/" not in match.group(2) and int(match.group(2)) >= len(L_LETTERS)):
        raise NotationError(f"{text!r} is not a jK term; write 2s+1 and K in brackets, like '2[5/2]' or '2[3/2]°'")
    mult, k_text, odd = match.groups()
    if "/" in k_text and k_text.split("/")[0].isdigit() and int(k_text.split("/")[0]) % 2 == 0:
        raise NotationError(f"jK term {text!r}: K = {k_text} is not a whole or half-integer in lowest terms")
    return JKTerm(int(mult), parse_j(k_text), -1 if odd else 1)


def parse_level_term(text: str) -> Term | JKTerm | None:
    """Parse the term column of a level: an LS term (``3D°``) or a jK term (``2[5/2]``).

    Examples
    --------
    >>> parse_level_term("2[5/2]")
    JKTerm(multiplicity=2, two_k=5, parity=1)
    >>> parse_level_term("3P°")
    Term(multiplicity=3, L=1, parity=-1)
    """
    if isinstance(text, str) and "[" in text:
        try:
            return parse_jk_term(text)
        except NotationError:
            try:
                return parse_term(text)
            except NotationError:
                pass
            raise
    return parse_term(text)


def jk_term_problem(configuration: Configuration, term: JKTerm) -> str | None:
    """Why a jK term does not fit a configuration (None when it fits).

    The configuration must name the parent term with its J before the outer
    subshell (``2p5(2P°3/2)3p``), the outer subshell must hold one electron, and K
    must be one of |j_parent - l| .. j_parent + l.

    Examples
    --------
    >>> jk_term_problem(parse_configuration("2p5(2P°3/2)3p"), parse_jk_term("2[5/2]"))
    >>> jk_term_problem(parse_configuration("2p5(2P°1/2)3p"), parse_jk_term("2[5/2]"))
    'K = 5/2 is impossible for parent J = 1/2 and l = 1 (K = 1/2 .. 3/2)'
    """
    index, _, two_j_parent = configuration.parents[-1] if configuration.parents else (0, None, None)
    if two_j_parent is None:
        return ("a jK term needs the parent term with its J in the configuration, "
                "like '2p5(2P°3/2)3p'")
    between = configuration.subshells[index + 1:-1]
    if index >= len(configuration.subshells) - 1 or any(k != 4 * l + 2 for _, l, k in between):
        return "the parent term must stand before the outer subshell (closed subshells between), like '2p5(2P°3/2)3p'"
    _, l, k = configuration.subshells[-1]
    if k != 1:
        return f"a jK term needs one outer electron; the outer subshell holds {k}"
    if term.multiplicity != 2:
        return f"one outer electron has 2s+1 = 2, not {term.multiplicity}"
    low, high = abs(two_j_parent - 2 * l), two_j_parent + 2 * l
    if not (low <= term.two_k <= high and (term.two_k - low) % 2 == 0):
        return (f"K = {format_j(term.two_k)} is impossible for parent J = {format_j(two_j_parent)} and l = {l} "
                f"(K = {format_j(low)} .. {format_j(high)})")
    return None


# ----------------------------------------------------------------- configurations

_CORES: dict[str, tuple[tuple[int, int, int], ...]] = {}


def _core(*shells: str) -> tuple[tuple[int, int, int], ...]:
    out = []
    for shell in shells:
        out.append((int(shell[0]), _L_OF[shell[1]], int(shell[2:])))
    return tuple(out)


_CORES["He"] = _core("1s2")
_CORES["Ne"] = _CORES["He"] + _core("2s2", "2p6")
_CORES["Ar"] = _CORES["Ne"] + _core("3s2", "3p6")
_CORES["Kr"] = _CORES["Ar"] + _core("3d10", "4s2", "4p6")
_CORES["Xe"] = _CORES["Kr"] + _core("4d10", "5s2", "5p6")
_CORES["Rn"] = _CORES["Xe"] + _core("4f14", "5d10", "6s2", "6p6")

_SUPERSCRIPTS = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")
_FROM_SUPERSCRIPTS = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹", "0123456789")

_SUBSHELL = re.compile(r"^([0-9]+)([a-z]|\[[0-9]+\])([0-9]*)$")


@dataclass(frozen=True)
class Configuration:
    """An electron configuration: ``(n, l, occupancy)`` per subshell, in written order.

    ``core`` keeps a bracketed noble-gas core as written (``"Ne"``) so it is
    formatted back the same way.
    """

    subshells: tuple[tuple[int, int, int], ...]
    core: str | None = None
    #: parent terms written in the configuration (``2p5(2P°3/2)3p``): (index of the subshell they
    #: follow, LS term, 2J or None)
    parents: tuple[tuple[int, Term, int | None], ...] = ()

    def without_parents(self) -> Configuration:
        """The same subshells without parent terms (the configuration a jK level belongs to)."""
        return Configuration(self.subshells, self.core)

    @property
    def all_subshells(self) -> tuple[tuple[int, int, int], ...]:
        """Subshells including the expanded core."""
        return (_CORES[self.core] if self.core else ()) + self.subshells

    @property
    def electrons(self) -> int:
        """Number of electrons, core included."""
        return sum(k for _, _, k in self.all_subshells)

    @property
    def parity(self) -> int:
        """(-1)^(sum of l over all electrons): +1 even, -1 odd."""
        return -1 if sum(l * k for _, l, k in self.all_subshells) % 2 else 1

    @property
    def outer(self) -> tuple[int, int, int]:
        """The last subshell written (the running electron of a series)."""
        shells = self.all_subshells
        if not shells:
            raise NotationError("empty configuration has no outer subshell")
        return shells[-1]

    def __str__(self) -> str:
        return format_configuration(self)


def parse_configuration(text: str) -> Configuration:
    """Parse a configuration (``1s2.2s2.2p6.3s``, ``3d``, ``[Ne].3s``, ``2p5 3p``).

    Raises
    ------
    NotationError
        Naming the subshell that is malformed or over-full, or an l >= n.

    Examples
    --------
    >>> parse_configuration("1s2.2s2.2p6.3s").parity
    1
    >>> parse_configuration("2p").parity
    -1
    >>> format_configuration(parse_configuration("1s² 2p⁶ 3s"))
    '1s2.2p6.3s'
    """
    if not isinstance(text, str):
        raise NotationError(f"configuration must be text, got {type(text).__name__}")
    # occupancies as the web pages show them (1s² 2p⁶) read as digits
    stripped = text.translate(_FROM_SUPERSCRIPTS).strip()
    if not stripped:
        raise NotationError("empty configuration")
    core = None
    rest = stripped
    match = re.match(r"^\[([A-Z][a-z])\]\.?\s*", rest)
    if match:
        core = match.group(1)
        if core not in _CORES:
            raise NotationError(f"configuration {text!r}: unknown core [{core}]")
        rest = rest[match.end():]
    parts: list[str] = []
    parent_texts: list[tuple[int, str]] = []
    for piece in re.split(r"(\([^()]*\))", rest):
        if piece.startswith("(") and piece.endswith(")"):
            if not parts:
                raise NotationError(f"configuration {text!r}: parent term {piece} must follow a subshell")
            parent_texts.append((len(parts) - 1, piece[1:-1]))
        else:
            parts.extend(p for p in re.split(r"[.\s]+", piece) if p)
    if not parts and core is None:
        raise NotationError(f"configuration {text!r} has no subshells")
    subshells = []
    seen = {(n, l) for n, l, _ in (_CORES[core] if core else ())}
    for part in parts:
        m = _SUBSHELL.match(part)
        if not m:
            raise NotationError(f"configuration {text!r}: {part!r} is not a subshell like '2p6'")
        n = int(m.group(1))
        l = _l_from_letter(m.group(2), f"configuration {text!r}")
        k = int(m.group(3)) if m.group(3) else 1
        if n < 1:
            raise NotationError(f"configuration {text!r}: {part!r} has n < 1")
        if l >= n:
            raise NotationError(f"configuration {text!r}: {part!r} has l >= n")
        if not 1 <= k <= 4 * l + 2:
            raise NotationError(f"configuration {text!r}: {part!r} holds {k} electrons, at most {4 * l + 2}")
        if (n, l) in seen:
            raise NotationError(f"configuration {text!r}: subshell {part!r} appears twice")
        seen.add((n, l))
        subshells.append((n, l, k))
    parents = tuple(_parse_parent(text, subshells, core, index, parent) for index, parent in parent_texts)
    return Configuration(tuple(subshells), core, parents)


_PARENT = re.compile(r"^([0-9]+)([A-Z])(°|o|\*)?\s*_?([0-9]+(?:/2)?)?$")


def _parse_parent(text: str, subshells: list, core: str | None, index: int, parent: str) -> tuple:
    """Parse and check a parent term ``2P°3/2`` written after subshell ``index``."""
    match = _PARENT.match(parent.strip())
    if not match:
        raise NotationError(f"configuration {text!r}: parent term ({parent}) is not an LS term with an optional J, "
                            "like (2P°3/2)")
    mult, letter, odd, j_text = match.groups()
    if letter == "J":
        raise NotationError(f"configuration {text!r}: J is not an L letter")
    term = Term(int(mult), _l_from_letter(letter, f"configuration {text!r}"), -1 if odd else 1)
    two_j = parse_j(j_text) if j_text else None
    if two_j is not None and not term.allows_two_j(two_j):
        raise NotationError(f"configuration {text!r}: J = {j_text} is impossible for the parent term {term}")
    inner = (_CORES[core] if core else ()) + tuple(subshells[: index + 1])
    parity = -1 if sum(l * k for _, l, k in inner) % 2 else 1
    if parity != term.parity:
        word = "odd" if parity == -1 else "even"
        raise NotationError(f"configuration {text!r}: parent term ({parent}) has the wrong parity; the subshells "
                            f"before it are {word}")
    open_before = [(n, l, k) for n, l, k in inner if 0 < k < 4 * l + 2]
    if len(open_before) == 1 and open_before[0][2] in (1, 4 * open_before[0][1] + 1):
        l = open_before[0][1]
        if (term.multiplicity, term.L) != (2, l):
            raise NotationError(f"configuration {text!r}: one electron or hole in an l = {l} subshell has the parent "
                                f"term 2{l_letter(l, upper=True)}, not ({parent})")
    return (index, term, two_j)


def format_configuration(config: Configuration) -> str:
    """Text of a configuration; occupancy 1 is not written (``2p6.3s``)."""
    parts = [f"[{config.core}]"] if config.core else []
    parents = {index: (term, two_j) for index, term, two_j in config.parents}
    glue = False
    for index, (n, l, k) in enumerate(config.subshells):
        shell = f"{n}{l_letter(l)}{'' if k == 1 else k}"
        if glue:
            parts[-1] += shell
        else:
            parts.append(shell)
        glue = index in parents
        if glue:
            term, two_j = parents[index]
            parts[-1] += f"({format_term(term)}{'' if two_j is None else format_j(two_j)})"
    return ".".join(parts)




def display_configuration(text: str, superscripts: bool = False) -> str:
    """A configuration as people read it: subshells separated by spaces, occupancies optionally raised.

    Display only: the stored form (dots between subshells, ``1s2.2s2.2p6.3s``) does not change and
    input keeps accepting dots and spaces. Text that does not parse as a configuration is returned as it is.

    Parameters
    ----------
    text : str
        A configuration as stored or typed.
    superscripts : bool
        Write occupancies as Unicode superscript digits (the web pages), not as plain digits.

    Returns
    -------
    str
        ``1s2 2s2 2p6 3s`` (or ``1s² 2s² 2p⁶ 3s``); parent terms stay attached (``2p5(2P°3/2) 3p``).

    Examples
    --------
    >>> display_configuration("1s2.2s2.2p6.3s")
    '1s2 2s2 2p6 3s'
    >>> display_configuration("[Ne].3s", superscripts=True)
    '[Ne] 3s'
    >>> display_configuration("2p5(2P°3/2)3p", superscripts=True)
    '2p⁵(2P°3/2) 3p'
    >>> display_configuration("not a configuration")
    'not a configuration'
    """
    if not isinstance(text, str):
        return "" if text is None else str(text)
    try:
        config = parse_configuration(text)
    except NotationError:
        return text
    parts = [f"[{config.core}]"] if config.core else []
    parents = {index: (term, two_j) for index, term, two_j in config.parents}
    for index, (n, l, k) in enumerate(config.subshells):
        occupancy = "" if k == 1 else str(k)
        if superscripts:
            occupancy = occupancy.translate(_SUPERSCRIPTS)
        shell = f"{n}{l_letter(l)}{occupancy}"
        if index in parents:
            term, two_j = parents[index]
            shell += f"({format_term(term)}{'' if two_j is None else format_j(two_j)})"
        parts.append(shell)
    return " ".join(parts)


#: noble-gas cores a configuration may abbreviate in brackets (``[Ar].4s``), with their electron counts
#: (checked against the ground configurations of the mendeleev package in tests/test_notation_identity.py)
NOBLE_GAS_CORES: dict[str, int] = {name: sum(k for _, _, k in shells) for name, shells in _CORES.items()}


def madelung_order(n_max: int = 8) -> tuple[tuple[int, int], ...]:
    """Subshells ``(n, l)`` in the order of increasing n + l, then n (the Madelung rule).

    The filling order of neutral ground configurations in the textbook aufbau scheme (e.g.
    Cowan 1981, sec. 1-5); the noble-gas cores are closed at its boundaries. Used here only
    to complete inner closed subshells a configuration leaves out, never to predict ground states.

    >>> madelung_order()[:8]
    ((1, 0), (2, 0), (2, 1), (3, 0), (3, 1), (4, 0), (3, 2), (4, 1))
    """
    pairs = [(n, l) for n in range(1, n_max + 1) for l in range(n)]
    return tuple(sorted(pairs, key=lambda nl: (nl[0] + nl[1], nl[0])))


def _implied_inner(written: tuple[tuple[int, int, int], ...], missing: int) -> tuple[tuple[int, int, int], ...] | None:
    """Closed subshells, in Madelung order and skipping any subshell written, holding exactly ``missing``
    electrons; None when no run of whole subshells holds that many."""
    taken = {(n, l) for n, l, _ in written}
    out: list[tuple[int, int, int]] = []
    count = 0
    for n, l in madelung_order():
        if count == missing:
            break
        if (n, l) in taken:
            continue
        out.append((n, l, 4 * l + 2))
        count += 4 * l + 2
    return tuple(out) if count == missing else None


def canonical_configuration(configuration: str | Configuration, electrons: int | None = None) -> str:
    """The one form of a configuration used to recognise a state across datasets and files.

    A closed core written out (``1s2.2s2.2p6.3s2.3p6.4s``), abbreviated (``[Ar].4s``, ``[Ar]4s``,
    ``[Ar] 4s``) or, given the species' number of ``electrons``, left out (``4s`` of K I) gives the
    same text. The rule: a bracketed core is expanded; electrons the configuration leaves out are put
    back as whole closed subshells in Madelung order (:func:`madelung_order`), skipping the subshells it
    writes (when no run of whole subshells holds exactly the missing number, nothing is added); the
    leading closed subshells are sorted by (n, l) and the largest noble-gas core among them is written
    in brackets. Subshells after the first open one (or after a parent term) keep their written order.

    Parameters
    ----------
    configuration : str or Configuration
        As written by a user or stored.
    electrons : int, optional
        Bound electrons of the species (``Spectrum.electrons``); without it an omitted core is not
        completed.

    Returns
    -------
    str
        Dotted text, e.g. ``'[Ar].4s'``.

    Raises
    ------
    NotationError
        When the text is not a configuration, or holds more electrons than ``electrons``.

    Examples
    --------
    >>> [canonical_configuration(c, 19) for c in ("1s2.2s2.2p6.3s2.3p6.4s", "[Ar].4s", "[Ar] 4s", "4s")]
    ['[Ar].4s', '[Ar].4s', '[Ar].4s', '[Ar].4s']
    >>> canonical_configuration("2p5(2P°3/2)3p", 10)
    '[He].2s2.2p5(2P°3/2)3p'
    >>> canonical_configuration("3d10.4s", 29), canonical_configuration("2p", 1)
    ('[Ar].3d10.4s', '2p')
    """
    config = parse_configuration(configuration) if isinstance(configuration, str) else configuration
    shells = config.all_subshells
    offset = len(shells) - len(config.subshells)   # parent indices count from the written subshells
    parent_at = {index + offset: (term, two_j) for index, term, two_j in config.parents}
    written = config.electrons
    if electrons is not None:
        if written > electrons:
            raise NotationError(f"configuration {format_configuration(config)!r} holds {written} electrons, "
                                f"the species {electrons}")
        inner = _implied_inner(shells, electrons - written) if written < electrons else ()
        if inner:
            shells = inner + shells
            parent_at = {index + len(inner): value for index, value in parent_at.items()}
    lead = 0
    while lead < len(shells) and shells[lead][2] == 4 * shells[lead][1] + 2 and lead not in parent_at:
        lead += 1
    closed = sorted(shells[:lead], key=lambda s: (s[0], s[1]))
    closed_set = set(closed)
    core = None
    for name, core_shells in sorted(_CORES.items(), key=lambda kv: -len(kv[1])):
        if set(core_shells) <= closed_set:
            core = name
            break
    kept = [s for s in closed if core is None or s not in set(_CORES[core])]
    rest = list(shells[lead:])
    parents = tuple((len(kept) + index - lead, term, two_j) for index, (term, two_j) in sorted(parent_at.items()))
    return format_configuration(Configuration(tuple(kept + rest), core, parents))


def state_key(configuration: str, term: str, two_j: int | None, electrons: int | None = None) -> tuple:
    """Identity of a level within a species: (canonical configuration, term, 2J).

    Text that is not a configuration is kept as written.
    """
    try:
        canonical = canonical_configuration(configuration, electrons)
    except NotationError:
        canonical = configuration
    return (canonical, term, two_j)


def level_label(configuration: str, term: str, two_j: int) -> str:
    """Level label ``<configuration> <term><J>``, e.g. ``'3d 2D5/2'``."""
    j_text = format_j(two_j)
    return f"{configuration} {term}{j_text}" if term else f"{configuration} J={j_text}"


@functools.lru_cache(maxsize=65536)
def _split_label(label: str) -> tuple[Configuration, str] | None:
    """A level label as (configuration, rest): the rest is the last word (term and J, ``J=2``, or a bare
    term); None when the text before it is not a configuration."""
    head, space, tail = label.strip().rpartition(" ")
    if not space or not head.strip() or not tail:
        return None
    try:
        return parse_configuration(head), tail
    except NotationError:
        return None


def display_label(label: str | None, superscripts: bool = False) -> str:
    """A level label as people read it: its configuration with spaces (:func:`display_configuration`).

    Display only, like :func:`display_configuration`: stored labels and the label columns of files keep
    the stored form (``1s2.2s2.2p6.3s 2S1/2``), and :func:`label_key` reads both forms back. A label
    whose first part is not a configuration (a name chosen by the user) is returned as it is.

    Examples
    --------
    >>> display_label("1s2.2s2.2p6.3s 2S1/2")
    '1s2 2s2 2p6 3s 2S1/2'
    >>> display_label("2p5(2P°3/2)3p 2[5/2]3", superscripts=True)
    '2p⁵(2P°3/2) 3p 2[5/2]3'
    >>> display_label("3d 2D5/2"), display_label("ground"), display_label("[Ne].3s J=1/2")
    ('3d 2D5/2', 'ground', '[Ne] 3s J=1/2')
    """
    if not isinstance(label, str):
        return "" if label is None else str(label)
    parts = _split_label(label)
    if parts is None:
        return label
    config, rest = parts
    return f"{display_configuration(format_configuration(config), superscripts=superscripts)} {rest}"


def label_key(label: str, electrons: int | None = None) -> str:
    """The stored form of a typed level label: subshells joined by dots, one space before the term.

    ``'1s2 2s2 2p6 3s 2S1/2'`` (as tables show it) and ``'1s2.2s2.2p6.3s 2S1/2'`` give the same key;
    with the species' number of ``electrons`` the configuration is made canonical
    (:func:`canonical_configuration`), so ``'4s 2S1/2'`` and ``'[Ar] 4s 2S1/2'`` of K I give one key too.
    Text that is not ``<configuration> <term><J>`` is returned stripped.

    >>> label_key("1s2 2s2 2p6 3s 2S1/2"), label_key(" 3d 2D5/2 "), label_key("my level")
    ('1s2.2s2.2p6.3s 2S1/2', '3d 2D5/2', 'my level')
    >>> label_key("4s 2S1/2", 19) == label_key("[Ar] 4s 2S1/2", 19) == "[Ar].4s 2S1/2"
    True
    """
    parts = _split_label(label)
    if parts is None:
        return label.strip()
    config, rest = parts
    if electrons is not None:
        try:
            return f"{canonical_configuration(config, electrons)} {rest}"
        except NotationError:
            pass
    return f"{format_configuration(config)} {rest}"


def label_pattern_to_regex(pattern: str) -> re.Pattern[str]:
    """Compile a series pattern where ``n`` stands for the running principal number.

    ``"ns 2S1/2"`` matches ``"5s 2S1/2"``; the principal number is captured as group ``n``.
    Only an ``n`` that starts the last subshell is the running number; a pattern without
    inner subshells (``"ns 2S1/2"``) also matches labels with a core (``"1s2.5s 2S1/2"``).
    """
    if not isinstance(pattern, str) or "n" not in pattern:
        raise NotationError(f"series pattern {pattern!r} must contain 'n' for the running principal number")
    config, _, rest = pattern.strip().partition(" ")
    head, dot, last = config.rpartition(".")
    if ")" in last:     # a parent term before the running subshell: '2p5(2P°3/2)ns'
        head, dot, last = (head + dot + last).rpartition(")")
    if not last.startswith("n"):
        raise NotationError(f"series pattern {pattern!r}: the last subshell must start with 'n', like 'ns'")
    prefix = re.escape(head + dot) if head else r"(?:[^ ]*\.)?"
    regex = prefix + r"(?P<n>[0-9]+)" + re.escape(last[1:])
    if rest:
        regex += re.escape(" " + rest)
    return re.compile("^" + regex + "$")


# ----------------------------------------------------------------- customary hydrogen line names

#: series of one-electron hydrogen lines by lower principal number, with the customary short prefix.
#: Lyman (n=1), Balmer (2), Paschen (3), Brackett (4), Pfund (5) and Humphreys (6) are the names in common
#: use (e.g. Herzberg, *Atomic Spectra and Atomic Structure*, 1944, ch. I, for the first five; Humphreys
#: 1953, J. Res. NBS 50, 1 for n = 6); the short prefixes Ly, H, Pa, Br, Pf, Hu are common practice, no source.
HYDROGEN_SERIES: dict[int, tuple[str, str]] = {
    1: ("Lyman", "Ly"), 2: ("Balmer", "H"), 3: ("Paschen", "Pa"),
    4: ("Brackett", "Br"), 5: ("Pfund", "Pf"), 6: ("Humphreys", "Hu"),
}
#: Greek letters for n_upper - n_lower = 1, 2, ... (common practice, no source)
HYDROGEN_GREEK = ("α", "β", "γ", "δ", "ε")
#: spectra whose lines carry these names: hydrogen and its isotopes, neutral
HYDROGEN_SPECTRA = ("H I", "D I", "T I")


def hydrogen_line_name(spectrum: str, n_lower: int | None, n_upper: int | None) -> str | None:
    """The customary name of a hydrogen line (``Hα``, ``Lyβ``, ``Pa9``), or None.

    Lines of H I, D I and T I whose lower shell is n = 1..6 get the series prefix
    and a Greek letter for n_upper - n_lower = 1..5 (α..ε); higher members get the
    prefix and the upper principal number (``H8`` for 8 -> 2). Other spectra, and
    He II (whose Pickering-type names this module does not give), get None.

    Parameters
    ----------
    spectrum : str
        Spectrum name (``"H I"``, ``"D I"``; ion notation is accepted).
    n_lower, n_upper : int or None
        Principal quantum numbers of the lower and upper level.

    Returns
    -------
    str or None

    Examples
    --------
    >>> hydrogen_line_name("H I", 2, 3), hydrogen_line_name("D I", 1, 3), hydrogen_line_name("H I", 2, 8)
    ('Hα', 'Lyβ', 'H8')
    >>> hydrogen_line_name("He II", 3, 4) is None
    True
    """
    if n_lower is None or n_upper is None or n_upper <= n_lower or n_lower not in HYDROGEN_SERIES:
        return None
    try:
        spec = parse_spectrum(spectrum)
    except NotationError:
        return None
    if spec.z != 1 or spec.charge != 0:
        return None
    prefix = HYDROGEN_SERIES[n_lower][1]
    step = n_upper - n_lower
    return prefix + (HYDROGEN_GREEK[step - 1] if step <= len(HYDROGEN_GREEK) else str(n_upper))


def hydrogen_series_of_name(name: str) -> tuple[int, int] | None:
    """(n_lower, n_upper) of a customary hydrogen line name, accepting ``H-alpha`` or ``Ly-beta`` spellings too.

    >>> hydrogen_series_of_name("Hα"), hydrogen_series_of_name("H-alpha"), hydrogen_series_of_name("Ly-beta")
    ((2, 3), (2, 3), (1, 3))
    >>> hydrogen_series_of_name("Pa9"), hydrogen_series_of_name("X1") is None
    ((3, 9), True)
    """
    words = {"alpha": "α", "beta": "β", "gamma": "γ", "delta": "δ", "epsilon": "ε"}
    text = name.strip().replace("-", "").replace(" ", "")
    for word, letter in words.items():
        if text.lower().endswith(word):
            text = text[: -len(word)] + letter
            break
    for n_lower, (_, prefix) in sorted(HYDROGEN_SERIES.items(), key=lambda kv: -len(kv[1][1])):
        if text[: len(prefix)].lower() == prefix.lower() and len(text) > len(prefix):
            rest = text[len(prefix):]
            if rest in HYDROGEN_GREEK:
                return n_lower, n_lower + 1 + HYDROGEN_GREEK.index(rest)
            if rest.isdigit() and int(rest) > n_lower + len(HYDROGEN_GREEK):
                return n_lower, int(rest)
    return None


def principal_number(label: str) -> int | None:
    """Principal quantum number of a level label's last subshell (``'3d 2D5/2'`` -> 3), or None.

    >>> principal_number("3d 2D5/2"), principal_number("1s2.10p 2P°1/2"), principal_number("?")
    (3, 10, None)
    """
    try:
        config = parse_configuration(label.split(" ")[0])
    except NotationError:
        return None
    return config.subshells[-1][0] if config.subshells else None
