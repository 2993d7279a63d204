"""The label QR encoder against reportlab's (an independent implementation of ISO/IEC 18004), and the mask
penalty rules (ISO/IEC 18004 clause 7.8.3, from memory) on symbols built to score each rule."""

from __future__ import annotations

import numpy as np
import pytest
from reportlab.graphics.barcode import qrencoder

from arcflash.output.qr import MASKS, _codewords, penalty, qr_matrix

PAYLOADS = [f"arcflash-label|{bus}|{rev}|{k:016x}" for k, (bus, rev) in enumerate(
    [("MV-MAIN", "A"), ("SWG-A", "B"), ("PNL-7", "R3"), ("A" * 40, "0"), ("MCC 4/0 \u00e9", "rev 12")])]


def _reference(payload):
    code = qrencoder.QRCode(None, qrencoder.QRErrorCorrectLevel.M)
    code.addData(payload)
    code.version = code.calculate_version()
    return code


@pytest.mark.parametrize("payload", PAYLOADS)
def test_codewords_equal_reportlabs(payload):
    code = _reference(payload)
    assert _codewords(payload, code.version) == (list(
        qrencoder.QRCode.createData(code.version, code.errorCorrectLevel, code.dataList)), code.version)
    assert _codewords(payload)[1] == code.version  # the smallest version that holds it, as reportlab finds


@pytest.mark.parametrize("payload", PAYLOADS)
def test_the_symbol_equals_reportlabs_with_the_same_mask(payload):
    ours = qr_matrix(payload)
    code = _reference(payload)
    same = []
    for mask in range(len(MASKS)):
        code.makeImpl(False, mask)
        same.append(bool((np.array(code.modules, dtype=bool) == ours).all()))
    assert same.count(True) == 1  # exactly one mask reproduces it: placement, format information and data


@pytest.mark.parametrize("payload", PAYLOADS)
def test_the_chosen_mask_has_the_least_penalty(payload):
    code = _reference(payload)
    scores, chosen = [], None
    for mask in range(len(MASKS)):
        code.makeImpl(True, mask)  # format information light, as while choosing
        scores.append(int(penalty(np.array(code.modules, dtype=bool))))
        code.makeImpl(False, mask)
        if (np.array(code.modules, dtype=bool) == qr_matrix(payload)).all():
            chosen = mask
    assert chosen == int(np.argmin(scores))


def test_penalty_rules():
    dark = np.ones((21, 21), dtype=bool)
    # N1: 42 lines of 21 like modules, 3 + 16 each; N2: 20 x 20 blocks, 3 each; N4: 100 % dark, 10 x 10
    assert penalty(dark) == 42 * 19 + 400 * 3 + 100
    checker = (np.add.outer(np.arange(21), np.arange(21)) % 2 == 0)
    assert penalty(checker) == 0  # no runs, no blocks, no finder-like pattern, 221/441 dark: under 5 % off
    finder = checker.copy()
    finder[10, 0:11] = [1, 0, 1, 1, 1, 0, 1, 0, 0, 0, 0]
    plain = checker.copy()
    plain[10, 0:11] = [1, 0, 1, 0, 1, 0, 1, 0, 1, 0, 1]
    assert penalty(finder) - penalty(plain) >= 40  # N3 (plus the runs and blocks the pattern brings)
    assert penalty(np.stack([dark, checker])).tolist() == [penalty(dark), 0]


def test_many_at_once_equal_one_at_a_time():
    from arcflash.output import qr

    payloads = PAYLOADS + [f"arcflash-label|BUS-{k}|A|{k:016x}" for k in range(20)]
    together = [m.copy() for m in qr.qr_matrices(payloads)]
    qr._MATRICES.clear()
    assert all((qr.qr_matrix(p) == m).all() for p, m in zip(payloads, together))


@pytest.mark.parametrize("size", [21, 33, 57, 64])
def test_penalty_alike_on_lines_as_integers_and_module_by_module(size):
    from arcflash.output.qr import _penalty_by_modules, _penalty_packed

    rng = np.random.default_rng(size)
    symbols = rng.random((40, size, size)) < rng.random((40, 1, 1))
    symbols[0, 3, 5:16] = [1, 0, 1, 1, 1, 0, 1, 0, 0, 0, 0]  # each finder-like pattern, along rows and columns
    symbols[1, 7, size - 11:] = [0, 0, 0, 0, 1, 0, 1, 1, 1, 0, 1]
    symbols[2, 0:11, size - 1] = [1, 0, 1, 1, 1, 0, 1, 0, 0, 0, 0]
    assert (_penalty_packed(symbols) == _penalty_by_modules(symbols)).all()


def _penalty_by_loops(m):
    """ISO/IEC 18004 7.8.3 penalties written out with loops (the test's own reading of the rules)."""
    size, score = len(m), 0
    for lines in (m, m.T):
        for line in lines:
            run = 1
            for k in range(1, size + 1):
                if k < size and line[k] == line[k - 1]:
                    run += 1
                    continue
                score += 3 + run - 5 if run >= 5 else 0
                run = 1
            text = "".join("1" if v else "0" for v in line)
            score += 40 * sum(text.startswith(p, k) for k in range(size - 10)
                              for p in ("10111010000", "00001011101"))
    score += 3 * sum(m[i, j] == m[i + 1, j] == m[i, j + 1] == m[i + 1, j + 1]
                     for i in range(size - 1) for j in range(size - 1))
    score += 10 * int(abs(100.0 * m.sum() / m.size - 50.0) // 5)
    return score


def test_penalty_equals_the_rules_written_out_with_loops():
    rng = np.random.default_rng(11)
    symbols = rng.random((12, 25, 25)) < rng.random((12, 1, 1))
    assert penalty(symbols).tolist() == [_penalty_by_loops(m) for m in symbols]
