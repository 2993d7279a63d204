"""QR codes of label payloads, fast enough for every label of a large facility.

reportlab's encoder (``reportlab.graphics.barcode.qrencoder``) is used for what is per version (function
patterns, format information, the data module order, the block structure) and for the data bit stream;
its slow parts, the Reed-Solomon codewords (polynomial objects) and the choice of mask (the symbol rebuilt
and scored eight times in pure Python; together about 10-30 ms a label), are done here: Reed-Solomon over
GF(256) with log tables, the eight masks applied to the data modules with numpy and scored by the penalty
rules of ISO/IEC 18004 clause 7.8.3 (from memory: N1 = 3
for a run of five like modules in a row or column, plus 1 per module beyond five; N2 = 3 per 2 × 2 block of
one colour; N3 = 40 per 1:1:3:1:1 finder-like pattern with four light modules on one side; N4 = 10 per 5 %
that the dark share departs from 50 %), and the symbol is built once more with the mask of least penalty.
Any mask gives a valid symbol; the penalty only favours easy reading.
"""

from __future__ import annotations

import functools

import numpy as np
from reportlab.graphics.barcode import qrencoder

#: Penalty weights N1-N4 of ISO/IEC 18004 clause 7.8.3 (from memory).
N1, N2, N3, N4 = 3, 3, 40, 10

#: The eight data masks of ISO/IEC 18004 Table 10 (i row, j column): True where a module is inverted.
MASKS = (
    lambda i, j: (i + j) % 2 == 0,
    lambda i, j: i % 2 == 0,
    lambda i, j: j % 3 == 0,
    lambda i, j: (i + j) % 3 == 0,
    lambda i, j: (i // 2 + j // 3) % 2 == 0,
    lambda i, j: (i * j) % 2 + (i * j) % 3 == 0,
    lambda i, j: ((i * j) % 2 + (i * j) % 3) % 2 == 0,
    lambda i, j: ((i * j) % 3 + (i + j) % 2) % 2 == 0,
)


def _finder_like(lines):
    """Number of finder-like windows (1:1:3:1:1 with four light modules after or before: ``10111010000`` or
    ``00001011101``) along the lines of each symbol (M, n, n), module by module."""
    windows = np.lib.stride_tricks.sliding_window_view(lines, 11, axis=2)
    found = 0
    for pattern in ("10111010000", "00001011101"):
        bits = np.array([c == "1" for c in pattern], dtype=bool)
        found = found + np.sum(np.all(windows == bits, axis=3), axis=(1, 2))
    return found


def _packed(lines):
    """Each line of each symbol (M, n, n), n at most 64, as an integer: bit k is module k (True dark)."""
    count, size = lines.shape[0], lines.shape[1]
    packed = np.packbits(lines, axis=2, bitorder="little")
    words = np.zeros((count, size, 8), dtype=np.uint8)
    words[:, :, : packed.shape[2]] = packed
    return words.view("<u8")[:, :, 0]


def _ones(bits):
    """An integer with the low ``bits`` bits set."""
    return np.uint64((1 << bits) - 1) if bits > 0 else np.uint64(0)


def _bits_set(words):
    """Number of bits set in each symbol's line integers (M, n), summed per symbol."""
    return np.bitwise_count(words).sum(axis=1, dtype=np.int64)


def _penalty_packed(stack):
    """:func:`penalty` of symbols (M, n, n) with n at most 64, every rule on lines held as integers (a line's
    modules compared with its neighbours' by shifts, counted by bits set)."""
    size = stack.shape[-1]
    score = np.zeros(stack.shape[0], dtype=np.int64)
    for rows_first, lines in ((True, stack), (False, np.swapaxes(stack, 1, 2))):
        r = _packed(lines)
        like = ~(r ^ (r >> 1)) & _ones(size - 1)  # bit k: module k like module k + 1
        five = like & (like >> 1) & (like >> 2) & (like >> 3) & _ones(size - 4)  # modules k..k+4 alike
        starting = five & ~(like << 1)  # ... and module k - 1 not like k: the window that starts a run
        score += _bits_set(five) + (N1 - 1) * _bits_set(starting)  # N1: 3 + (length - 5) per run of 5+
        if size >= 11:
            light = ~r
            for pattern in ("10111010000", "00001011101"):  # N3, read along the line from module k
                window = _ones(size - 10)
                for j, bit in enumerate(pattern):
                    window = window & ((r if bit == "1" else light) >> j)
                score += N3 * _bits_set(window)
        if rows_first:  # N2: a 2 x 2 block of one colour (rows i and i + 1 alike at columns k and k + 1)
            down = ~(r[:, :-1] ^ r[:, 1:])
            score += N2 * _bits_set(down & (down >> 1) & like[:, :-1] & _ones(size - 1))
            dark = _bits_set(r)
    dark_percent = 100.0 * dark / (size * size)
    score += N4 * (np.abs(dark_percent - 50.0) // 5).astype(np.int64)
    return score


def penalty(modules):
    """The mask penalty N1 + N2 + N3 + N4 of a symbol, or of a stack of symbols (..., n, n), True dark.

    Examples
    --------
    >>> int(penalty(np.ones((21, 21), dtype=bool)))  # 42 runs of 21, 400 blocks, no finder, 100 % dark
    2098
    """
    m = np.asarray(modules, dtype=bool)
    stack = m.reshape((-1,) + m.shape[-2:])
    if stack.shape[-1] <= 64:  # lines as 64-bit integers, in chunks of a few MB
        score = np.concatenate([_penalty_packed(stack[k: k + 2048]) for k in range(0, stack.shape[0], 2048)]
                               or [np.zeros(0, dtype=np.int64)])
    else:
        score = _penalty_by_modules(stack)
    return score.reshape(m.shape[:-2]) if m.ndim > 2 else score[0]


def _penalty_by_modules(stack):
    """:func:`penalty` of symbols (M, n, n) of any size, module by module."""
    count, size = stack.shape[0], stack.shape[-1]
    score = np.zeros(count, dtype=np.int64)
    for lines in (stack, np.swapaxes(stack, 1, 2)):
        # N1 = sum over runs of five or more like modules of (3 + length - 5) = A + 2 B, where A counts the
        # windows of five like modules and B the runs they belong to (windows that start a run)
        like = lines[:, :, 1:] == lines[:, :, :-1]
        five = like[:, :, :-3] & like[:, :, 1:-2] & like[:, :, 2:-1] & like[:, :, 3:]
        starting = five.copy()
        starting[:, :, 1:] &= ~like[:, :, :-4]
        score += np.sum(five, axis=(1, 2)) + (N1 - 1) * np.sum(starting, axis=(1, 2))
        if size >= 11:
            score += N3 * _finder_like(lines)
    block = stack[:, :-1, :-1]
    same = (block == stack[:, 1:, :-1]) & (block == stack[:, :-1, 1:]) & (block == stack[:, 1:, 1:])
    score += N2 * np.sum(same, axis=(1, 2))
    dark_percent = 100.0 * np.count_nonzero(stack, axis=(1, 2)) / (size * size)
    score += N4 * (np.abs(dark_percent - 50.0) // 5).astype(np.int64)
    return score


#: GF(256) of QR codes (primitive polynomial x^8 + x^4 + x^3 + x^2 + 1, ISO/IEC 18004 clause 7.5.2): exp/log.
_EXP = [0] * 512
_LOG = [0] * 256
_value = 1
for _power in range(255):
    _EXP[_power] = _value
    _LOG[_value] = _power
    _value <<= 1
    if _value & 0x100:
        _value ^= 0x11D
for _power in range(255, 512):
    _EXP[_power] = _EXP[_power - 255]

_LEVEL = qrencoder.QRErrorCorrectLevel.M


@functools.lru_cache(maxsize=None)
def _generator(degree):
    """Coefficients (highest power first, leading 1) of the Reed-Solomon generator of ``degree``."""
    poly = [1]
    for i in range(degree):
        poly = [a ^ (_EXP[_LOG[b] + i] if b else 0) for a, b in zip(poly + [0], [0] + poly)]
    return poly


def _error_correction(data, degree):
    """Reed-Solomon error-correction codewords of one block (the remainder of data·x^degree / generator)."""
    generator = _generator(degree)[1:]
    remainder = [0] * degree
    for codeword in data:
        factor = codeword ^ remainder[0]
        remainder = remainder[1:] + [0]
        if factor:
            log = _LOG[factor]
            remainder = [r ^ (_EXP[log + _LOG[g]] if g else 0) for r, g in zip(remainder, generator)]
    return remainder


def _segments(payload):
    """reportlab's segments (mode chosen as it chooses) of a payload."""
    code = qrencoder.QRCode(1, _LEVEL)
    code.addData(payload)
    return code.dataList


def _data_bits(segments, version):
    """(value, length) of the bit stream of the segments: mode, count and data, as reportlab writes them."""
    value = length = 0
    for segment in segments:
        if isinstance(segment, qrencoder.QR8bitByte):  # the labels' case, written here in one go
            data = segment.data if isinstance(segment.data, bytes) else bytes(segment.data, "latin-1")
            count_bits = segment.getLengthBits(version)
            value = (((value << 4 | segment.mode) << count_bits | len(data)) << (8 * len(data))
                     | int.from_bytes(data, "big"))
            length += 4 + count_bits + 8 * len(data)
        else:
            buffer = qrencoder.QRBitBuffer()
            segment.write(buffer, version)
            bits = buffer.getLengthInBits()
            value = value << bits | (int.from_bytes(bytes(buffer.buffer), "big") >> (8 * len(buffer.buffer) - bits))
            length += bits
    return value, length


@functools.lru_cache(maxsize=None)
def _blocks(version):
    """(data codewords, error-correction codewords) of each block of ``version`` at level M."""
    return tuple((b.dataCount, b.totalCount - b.dataCount) for b in qrencoder.QRRSBlock.getRSBlocks(version, _LEVEL))


@functools.lru_cache(maxsize=None)
def _bits_needed(kind_and_lengths):
    """Smallest version whose capacity holds segments of these (kind, length) [-] (cached per shape)."""
    segments = [kind(b"x" * n) if kind is qrencoder.QR8bitByte else kind("0" * n) for kind, n in kind_and_lengths]
    for version in range(1, 41):
        capacity = 8 * sum(data for data, _ in _blocks(version))
        if _data_bits(segments, version)[1] <= capacity:
            return version
    raise ValueError("payload too long for a QR code at error correction level M")


def _data_codewords(payload, version=None):
    """(data codewords with terminator and padding, version): the smallest version unless given."""
    segments = _segments(payload)
    if version is None:
        version = _bits_needed(tuple((type(s), len(s.data)) for s in segments))
    value, length = _data_bits(segments, version)
    capacity = 8 * sum(data for data, _ in _blocks(version))
    terminator = min(4, capacity - length)
    value, length = value << terminator, length + terminator
    fill = -length % 8
    value, length = value << fill, length + fill
    data = list(value.to_bytes(length // 8, "big")) if length else []
    written = len(data)
    while len(data) < capacity // 8:
        data.append((0xEC, 0x11)[(len(data) - written) % 2])
    return data, version


@functools.lru_cache(maxsize=None)
def _parity_matrix(data_count, ec_count):
    """The GF(2) matrix that maps the bits of a block's data codewords to the bits of its Reed-Solomon
    codewords (the code is linear: the codewords of a sum are the sum of the codewords) [-]."""
    rows = []
    for bit in range(8 * data_count):
        unit = [0] * data_count
        unit[bit // 8] = 0x80 >> (bit % 8)
        rows.append(np.unpackbits(np.array(_error_correction(unit, ec_count), dtype=np.uint8)))
    return np.array(rows, dtype=np.uint8)


@functools.lru_cache(maxsize=None)
def _parity_float(data_count, ec_count):
    """:func:`_parity_matrix` as float32, for a matrix product of 0/1 values (exact below 2**24)."""
    return _parity_matrix(data_count, ec_count).astype(np.float32)


@functools.lru_cache(maxsize=None)
def _interleaving(version):
    """Positions, in the block-by-block order (data of each block, then EC of each), of the placed order."""
    blocks = _blocks(version)
    data_total = sum(d for d, _ in blocks)
    data_start = np.cumsum([0] + [d for d, _ in blocks])[:-1]
    ec_start = data_total + np.cumsum([0] + [e for _, e in blocks])[:-1]
    order = []
    for starts, counts in ((data_start, [d for d, _ in blocks]), (ec_start, [e for _, e in blocks])):
        for k in range(max(counts)):
            order += [int(start) + k for start, count in zip(starts, counts) if k < count]
    return np.array(order, dtype=np.intp)


def _codewords_batch(data, version):
    """Placed codewords (N, total) of N payloads' data codewords (N, data total) of one version."""
    data = np.asarray(data, dtype=np.uint8)
    parts, offset = [], 0
    for data_count, _ in _blocks(version):
        parts.append(data[:, offset: offset + data_count])
        offset += data_count
    for (data_count, ec_count), block in zip(_blocks(version), parts[: len(_blocks(version))]):
        bits = np.unpackbits(block, axis=1).astype(np.float32)  # sums of at most 8 x 123 ones: exact
        parity = (bits @ _parity_float(data_count, ec_count)) % 2
        parts.append(np.packbits(parity.astype(np.uint8), axis=1))
    return np.concatenate(parts, axis=1)[:, _interleaving(version)]


def _codewords(payload, version=None):
    """Data and error-correction codewords of ``payload`` in the order they are placed (blocks interleaved),
    and the version: the smallest that holds it unless given."""
    data, version = _data_codewords(payload, version)
    return _codewords_batch([data], version)[0].tolist(), version


@functools.lru_cache(maxsize=None)
def _version_layout(version):
    """Per version: the symbol with function patterns and blank format information (masks are scored on
    it), the data module positions, each mask's values there, and each mask's final function patterns."""
    code = qrencoder.QRCode(version, _LEVEL)
    code.makeImpl(True, 0)
    scoring = np.array(code.modules, dtype=bool)
    positions = code.dataPosIterator()
    cols = np.array([c for c, _ in positions], dtype=np.intp)
    rows = np.array([r for _, r in positions], dtype=np.intp)
    masks = np.array([mask(rows, cols) for mask in MASKS])
    finals = []
    for k in range(len(MASKS)):
        code.makeImpl(False, k)
        finals.append(np.array(code.modules, dtype=bool))
    return scoring, rows, cols, masks, finals


_MATRICES = {}
_IMAGES = {}  # the symbols as 1-bit images in hexadecimal digits (qr_image_hex)
_MATRICES_KEPT = 20_000


def qr_matrix(payload):
    """The QR symbol of ``payload`` (error correction level M): the smallest version that holds it, the mask
    of least penalty.

    Returns
    -------
    numpy.ndarray
        Read-only (n, n) booleans, True dark, row 0 at the top.
    """
    if payload not in _MATRICES:
        qr_matrices([payload])
    return _MATRICES[payload]


@functools.lru_cache(maxsize=None)
def _chunk_layout(version):
    """Per version, flat (n * n): the function patterns with blank format information and light data
    modules; the data module positions in placing order; each mask's inversions on the data modules only
    (8, n * n); and each mask's final function patterns, data modules light (8, n * n)."""
    scoring, rows, cols, masks, finals = _version_layout(version)
    flat = rows * scoring.shape[1] + cols
    base = scoring.ravel().copy()
    base[flat] = False
    patterns = np.zeros((len(MASKS), base.size), dtype=bool)
    patterns[:, flat] = masks
    cleared = np.array(finals).reshape(len(MASKS), -1)
    cleared[:, flat] = False
    return base, flat, patterns, cleared


#: Payloads encoded together (a few MB of symbols: eight masks of each) [-].
_CHUNK = 512


def _encode_chunk(version, group):
    """Encode (payload, data codewords) pairs of one version; remember each symbol."""
    base, flat, patterns, finals = _chunk_layout(version)
    codewords = _codewords_batch([data for _, data in group], version)
    packed = np.unpackbits(codewords, axis=1)
    placed = np.zeros((len(group), base.size), dtype=bool)  # the data modules, in place, unmasked
    count = min(packed.shape[1], flat.size)
    placed[:, flat[:count]] = packed[:, :count]  # remainder bits stay light
    size = int(round(base.size ** 0.5))
    # function patterns, data and each mask (their modules apart: XOR puts them together)
    symbols = ((base ^ placed)[:, None, :] ^ patterns[None]).reshape(len(group), len(MASKS), size, size)
    best = np.argmin(penalty(symbols), axis=1)
    # each symbol's function patterns with its mask's format information, its data and mask
    chosen = (finals[best] ^ placed ^ patterns[best]).reshape(-1, size, size)
    chosen.setflags(write=False)  # shared through the cache
    rows = np.packbits(chosen, axis=2).reshape(len(group), -1)
    for (payload, _), symbol, image in zip(group, chosen, rows):
        _MATRICES[payload] = symbol
        _IMAGES[payload] = image.tobytes().hex()


def qr_image_hex(payload):
    """The QR symbol of ``payload`` (:func:`qr_matrix`) as the data of a 1-bit image: rows top first, 1 dark,
    each padded to whole bytes, in hexadecimal digits (made with the symbol)."""
    if payload not in _IMAGES:
        qr_matrices([payload])
    return _IMAGES[payload]


def qr_matrices(payloads):
    """:func:`qr_matrix` of many payloads at once (the masks of all scored in one array operation per
    version); the symbols are remembered for :func:`qr_matrix`.

    Returns
    -------
    list of numpy.ndarray
    """
    todo = [p for p in dict.fromkeys(payloads) if p not in _MATRICES]
    if len(_MATRICES) + len(todo) > _MATRICES_KEPT:
        _MATRICES.clear()
        _IMAGES.clear()
        todo = list(dict.fromkeys(payloads))
    by_version = {}
    for payload in todo:
        data, version = _data_codewords(payload)
        by_version.setdefault(version, []).append((payload, data))
    for version, group in by_version.items():
        for start in range(0, len(group), _CHUNK):
            _encode_chunk(version, group[start: start + _CHUNK])
    return [_MATRICES[p] for p in payloads]
