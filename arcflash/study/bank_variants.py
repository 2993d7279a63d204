"""Device banks with some devices replaced (:mod:`.device_bank`): a bank of the site's devices read through a
mapping to replacements (:class:`PatchedBank`), or several variants of the devices at once, each pair or arc
read in its own variant (:class:`VariantBank`: mitigation candidates, zone settings).

A replaced device is read from a bank of the replacing devices (:func:`.device_bank.bank_of_devices`), every
other from the site's own bank; each value is the one the device's own bank gives (the banks evaluate pair by
pair), so a variant's numbers are those of a site with the replacements made.
"""

from __future__ import annotations

import numpy as np

__all__ = ["PatchedBank", "VariantBank"]


def _evaluated(base, changed, device, entry, current, method):
    """``method`` ('clearing_time_s' or 'elements') of the site bank ``base`` for the pairs whose ``entry`` is -1
    (its ``device``), of the bank ``changed`` for the others (its entry), put back in order."""
    mine, theirs = np.flatnonzero(entry < 0), np.flatnonzero(entry >= 0)
    parts = [(getattr(bank, method)(index, current[at]), at)
             for bank, index, at in ((base, device[mine], mine), (changed, entry[theirs], theirs)) if at.size]
    if method == "clearing_time_s":
        t = np.empty(current.shape)
        for found, at in parts:
            t[at] = found
        return t
    width = max(base.element_count, changed.element_count if changed is not None else 1)
    times, reset, breaker = np.full((current.size, width), np.inf), np.zeros((current.size, width)), np.zeros(current.size)
    for (t, r, b), at in parts:
        times[at, :t.shape[1]], reset[at, :r.shape[1]], breaker[at] = t, r, b
    return times, reset, breaker


class PatchedBank:
    """A device bank of the site's devices with some replaced: entry ``j`` is the site bank's device
    ``device[j]``, or where ``entry[j] >= 0``, entry ``entry[j]`` of ``changed`` (a bank of the replacing
    devices). Answers what the one-stage reading asks of a bank."""

    def __init__(self, base, changed, device, entry):
        self.base, self.changed = base, changed
        self.device, self.entry = np.asarray(device, dtype=np.intp), np.asarray(entry, dtype=np.intp)
        self.element_count = max(base.element_count, changed.element_count if changed is not None else 1)

    def clearing_time_s(self, device, current_a):
        """Clearing time of each entry at its current (max band) [s]; see :meth:`DeviceBank.clearing_time_s`."""
        device = np.asarray(device, dtype=np.intp)
        return _evaluated(self.base, self.changed, self.device[device], self.entry[device],
                          np.asarray(current_a, dtype=float), "clearing_time_s")


class VariantBank:
    """Every variant's devices at once (``variants`` of them): variant ``k``'s device ``d`` is entry ``e`` of
    the bank ``changed`` where ``keys[e] == k * n_dev + d``, else the site bank's device ``d``. What staged
    clearing asks of a bank, each pair or arc in its own variant (:class:`~.staging.StagingContext`)."""

    def __init__(self, base, changed, keys, variants, n_dev):
        self.base, self.changed, self.variants, self.n_dev = base, changed, variants, n_dev
        keys = np.asarray(keys, dtype=np.int64)
        self._order = np.argsort(keys, kind="stable")
        self._keys = keys[self._order]
        self.element_count = max(base.element_count, changed.element_count if changed is not None else 1)
        self._thresholds = {}

    def entry(self, device, variants):
        """The changed bank's entry of each (device, variant), -1 for the site's own device [-]."""
        key = np.asarray(variants, dtype=np.int64) * self.n_dev + np.asarray(device, dtype=np.int64)
        if not self._keys.size:
            return np.full(key.shape, -1, dtype=np.intp)
        at = np.minimum(np.searchsorted(self._keys, key), self._keys.size - 1)
        return np.where(self._keys[at] == key, self._order[at], -1)

    def clearing_time_s(self, device, current_a, variants):
        """Clearing time of ``device[k]`` as variant ``variants[k]`` has it, at ``current_a[k]`` (max band); see
        :meth:`DeviceBank.clearing_time_s` [s]."""
        device = np.asarray(device, dtype=np.intp)
        return _evaluated(self.base, self.changed, device, self.entry(device, variants),
                          np.asarray(current_a, dtype=float), "clearing_time_s")

    def elements(self, device, current_a, variants):
        """Each element of ``device[k]`` as variant ``variants[k]`` has it, at ``current_a[k]``; see
        :meth:`DeviceBank.elements`."""
        device = np.asarray(device, dtype=np.intp)
        return _evaluated(self.base, self.changed, device, self.entry(device, variants),
                          np.asarray(current_a, dtype=float), "elements")

    def threshold_a(self, within_s):
        """Smallest current at which each device clears within ``within_s``, one row per variant
        (see :meth:`DeviceBank.threshold_a`; read-only, remembered: a copy per call of variants × devices
        values would cost more than the reading) [A]."""
        if within_s not in self._thresholds:
            found = np.tile(self.base.threshold_a(within_s), (self.variants, 1))
            if self._keys.size:
                found.ravel()[self._keys] = self.changed.threshold_a(within_s)[self._order]
            found.flags.writeable = False
            self._thresholds[within_s] = found
        return self._thresholds[within_s]
