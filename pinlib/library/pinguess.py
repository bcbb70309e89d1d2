"""Pin functions guessed from signal names (``SDA``, ``SPI1_SCK``, ``nCS``...).

``pinlib parts import`` offers the guess when no ``--pin`` mapping is given and writes
nothing until the user confirms it.  A name is cut into its words at every character
that is not a letter or digit; trailing digits of a word are dropped (``SCK0``, ``SPI1``);
a word that is a known spelling of a bus signal names it, through the protocol table
(:data:`pinlib.core.protocols.SIGNAL_FUNCTION`).  ``CLK`` counts as the SPI clock only
beside a word ``SPI`` or ``QSPI``.  A name with no such word, or with words of two
different signals, is not guessed.
"""

from __future__ import annotations

from pinlib.core.protocols import SIGNAL_FUNCTION

__all__ = ["SPELLINGS", "guess_function"]

#: Spellings of bus signals in signal names (upper case), and the signal each means.
#: common practice, no source: the names vendors' pin lists use, old and new SPI terms.
SPELLINGS: dict[str, str] = {
    "SDA": "sda", "SDAT": "sda", "SMBDAT": "sda", "SMBDATA": "sda",
    "SCL": "scl", "SMBCLK": "scl",
    "SCK": "sclk", "SCLK": "sclk", "SPCK": "sclk",
    "MOSI": "copi", "COPI": "copi", "SIMO": "copi", "PICO": "copi",
    "MISO": "cipo", "CIPO": "cipo", "SOMI": "cipo", "POCI": "cipo",
    "CS": "cs", "NCS": "cs", "CSN": "cs", "CSB": "cs", "SS": "cs", "NSS": "cs", "SSN": "cs",
}

_MAX_NAME = 80  # longer names are not guessed (a signal name is a few characters)


def _words(name: str) -> list[str]:
    words, word = [], []
    for ch in name[:_MAX_NAME].upper() + " ":
        if ch.isascii() and ch.isalnum():
            word.append(ch)
        elif word:
            words.append("".join(word).rstrip("0123456789"))
            word = []
    return [w for w in words if w]


def guess_function(signal: str) -> str | None:
    """The pin function a signal name suggests, or None.

    Examples
    --------
    >>> guess_function("SPI1_SCK"), guess_function("nCS"), guess_function("GPIO4")
    ('spi-sclk', 'spi-cs', None)
    """
    words = _words(signal)
    found = {SPELLINGS[w] for w in words if w in SPELLINGS}
    if "CLK" in words and ("SPI" in words or "QSPI" in words):
        found.add("sclk")
    if len(found) != 1:
        return None
    return SIGNAL_FUNCTION[found.pop()]
