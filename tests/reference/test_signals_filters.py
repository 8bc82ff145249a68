"""Band limiting and phase/envelope coupling against scipy.signal and numpy formulas.

Each check names its reference. Run by ctest with /usr/bin/python3 (Debian packages)."""
import unittest

import numpy as np
from scipy import signal

from signals_support import CritplexError, Series, connect, connect_bands, nitime_fmri

TR = 1.89  # seconds; the repetition time nitime's examples give for this series (from memory)


def oscillators(frames=2000, channels=6, fs=250.0, seed=7):
    """Invented test input: coupled 10 Hz oscillators with lags plus noise (seeded)."""
    rng = np.random.default_rng(seed)
    t = np.arange(frames) / fs
    common = np.sin(2 * np.pi * 10 * t + 0.3 * np.cumsum(rng.standard_normal(frames)) / np.sqrt(fs))
    x = np.empty((frames, channels))
    for c in range(channels):
        lag = int(c * 3)
        x[:, c] = (0.2 * c + 0.5) * np.roll(common, lag) + 0.8 * rng.standard_normal(frames)
    return x, fs


class Butterworth(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        _, data, _ = nitime_fmri()
        x = data[:, 3:]
        cls.x = (x - x.mean(0)) / x.std(0)   # unit scale, so 1e-8 is a relative agreement
        cls.series = Series.from_array(cls.x)

    def check(self, low, high, order):
        # reference: scipy.signal.butter(output="sos") + scipy.signal.sosfiltfilt (default odd
        # padding), Debian python3-scipy
        options = {"sampling_interval": TR, "filter": {"order": order}}
        if low is not None:
            options["filter"]["low_hz"] = low
        if high is not None:
            options["filter"]["high_hz"] = high
        ours = self.series.clean(options).values()
        fs = 1.0 / TR
        if low is not None and high is not None:
            sos = signal.butter(order, [low, high], btype="bandpass", fs=fs, output="sos")
        elif high is not None:
            sos = signal.butter(order, high, btype="lowpass", fs=fs, output="sos")
        else:
            sos = signal.butter(order, low, btype="highpass", fs=fs, output="sos")
        ref = signal.sosfiltfilt(sos, self.x, axis=0)
        np.testing.assert_allclose(ours, ref, atol=1e-8, rtol=0)

    def test_band_pass(self):
        self.check(0.01, 0.1, 4)

    def test_band_pass_odd_order(self):
        self.check(0.02, 0.08, 3)

    def test_low_pass(self):
        self.check(None, 0.1, 5)

    def test_high_pass(self):
        self.check(0.01, None, 2)

    def test_high_pass_odd(self):
        self.check(0.01, None, 3)

    def test_fft_mask(self):
        # reference: numpy.fft.rfft, bins outside [low, high] zeroed, numpy.fft.irfft
        ours = self.series.clean({"sampling_interval": TR,
                                  "filter": {"design": "fft_mask", "low_hz": 0.01, "high_hz": 0.1}}).values()
        spec = np.fft.rfft(self.x, axis=0)
        f = np.fft.rfftfreq(self.x.shape[0], d=TR)
        spec[(f < 0.01) | (f > 0.1)] = 0
        ref = np.fft.irfft(spec, n=self.x.shape[0], axis=0)
        np.testing.assert_allclose(ours, ref, atol=1e-10, rtol=0)

    def test_meg_rate(self):
        # reference: scipy.signal.butter + sosfiltfilt at 250 Hz, alpha band (8-13 Hz, common practice)
        x, fs = oscillators()
        ours = Series.from_array(x).clean({"sampling_interval": 1 / fs,
                                           "filter": {"low_hz": 8, "high_hz": 13}}).values()
        ref = signal.sosfiltfilt(signal.butter(4, [8, 13], btype="bandpass", fs=fs, output="sos"), x, axis=0)
        np.testing.assert_allclose(ours, ref, atol=1e-8 * np.abs(x).max(), rtol=0)


class BadBands(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        _, data, _ = nitime_fmri()
        cls.series = Series.from_array(data[:, 3:])

    def fails(self, options, *fragments):
        with self.assertRaises(CritplexError) as caught:
            connect(self.series, options)
        for f in fragments:
            self.assertIn(f, str(caught.exception))

    def test_at_nyquist(self):
        self.fails({"sampling_interval": 2.0, "filter": {"low_hz": 0.01, "high_hz": 0.25}}, "Nyquist", "0.25 Hz")

    def test_above_nyquist(self):
        self.fails({"sampling_interval": 2.0, "filter": {"high_hz": 0.3}}, "Nyquist")

    def test_low_above_high(self):
        self.fails({"sampling_interval": 2.0, "filter": {"low_hz": 0.1, "high_hz": 0.05}}, "below the high edge")

    def test_too_narrow(self):
        # 250 frames at 2 s: 500 s, resolution 0.002 Hz
        self.fails({"sampling_interval": 2.0, "filter": {"low_hz": 0.05, "high_hz": 0.051}}, "narrower", "0.002 Hz")

    def test_low_edge_below_resolution(self):
        self.fails({"sampling_interval": 2.0, "filter": {"low_hz": 0.001}}, "frequency resolution")

    def test_no_sampling_interval(self):
        self.fails({"filter": {"low_hz": 0.01, "high_hz": 0.1}}, "sampling_interval")

    def test_series_shorter_than_padding(self):
        short = Series.from_array(nitime_fmri()[1][:40, 3:8])
        with self.assertRaises(CritplexError) as caught:
            connect(short, {"sampling_interval": 0.5, "filter": {"low_hz": 0.1, "high_hz": 0.5, "order": 8}})
        self.assertIn("pads 51 frames", str(caught.exception))

    def test_band_and_bands(self):
        self.fails({"sampling_interval": 2.0, "filter": {"low_hz": 0.01}, "bands": {"slow": [0.01, 0.1]}}, "either")


def analytic_reference(x):
    # reference: scipy.signal.hilbert (analytic signal, Marple 1999)
    return signal.hilbert(x, axis=0)


def plv(z):
    # Lachaux et al. 1999: |<exp(i(phi_i - phi_j))>|
    u = z / np.abs(z)
    return np.abs(u.T @ u.conj()) / z.shape[0]


def pli(z):
    # Stam, Nolte & Daffertshofer 2007: |<sign(Im(z_i conj z_j))>|
    n = z.shape[1]
    out = np.ones((n, n))
    for i in range(n):
        for j in range(n):
            if i != j:
                out[i, j] = abs(np.mean(np.sign(np.imag(z[:, i] * np.conj(z[:, j])))))
    return out


def wpli(z):
    # Vinck et al. 2011: |<Im X>| / <|Im X|>, X = z_i conj z_j
    n = z.shape[1]
    out = np.ones((n, n))
    for i in range(n):
        for j in range(n):
            if i != j:
                im = np.imag(z[:, i] * np.conj(z[:, j]))
                out[i, j] = abs(im.mean()) / np.abs(im).mean()
    return out


def aec(z):
    return np.corrcoef(np.abs(z), rowvar=False)


def aec_orthogonalised(z):
    # Hipp et al. 2012: envelope of Im(z_j conj(z_i) / |z_i|) correlated with |z_i|,
    # averaged over both directions
    n = z.shape[1]
    out = np.ones((n, n))
    a = np.abs(z)
    for i in range(n):
        for j in range(n):
            if i != j:
                y_on_x = np.abs(np.imag(z[:, j] * np.conj(z[:, i]) / a[:, i]))
                x_on_y = np.abs(np.imag(z[:, i] * np.conj(z[:, j]) / a[:, j]))
                out[i, j] = 0.5 * (np.corrcoef(a[:, i], y_on_x)[0, 1] + np.corrcoef(a[:, j], x_on_y)[0, 1])
    return out


class PhaseCoupling(unittest.TestCase):
    REFS = {"plv": plv, "pli": pli, "wpli": wpli, "aec": aec, "aec_orthogonalised": aec_orthogonalised}

    @classmethod
    def setUpClass(cls):
        cls.x, cls.fs = oscillators()
        cls.series = Series.from_array(cls.x)

    def test_broadband(self):
        z = analytic_reference(self.x)
        for method, ref in self.REFS.items():
            with self.subTest(method=method):
                ours, _ = connect(self.series, {"method": method})
                np.testing.assert_allclose(ours, ref(z), atol=1e-9)

    def test_odd_length(self):
        # odd T exercises the one-sided spectrum without a Nyquist bin
        x = self.x[:1999]
        z = analytic_reference(x)
        ours, _ = connect(Series.from_array(x), {"method": "wpli"})
        np.testing.assert_allclose(ours, wpli(z), atol=1e-9)

    def test_bands(self):
        # reference: scipy.signal.butter + sosfiltfilt + hilbert, one matrix per named band
        bands = {"theta": [4, 8], "alpha": [8, 13], "beta": [13, 30]}
        result = connect_bands(self.series, {"method": "wpli", "sampling_interval": 1 / self.fs, "bands": bands})
        self.assertEqual([b for b, _, _ in result], ["theta", "alpha", "beta"])
        for name, ours, info in result:
            lo, hi = bands[name]
            sos = signal.butter(4, [lo, hi], btype="bandpass", fs=self.fs, output="sos")
            z = analytic_reference(signal.sosfiltfilt(sos, self.x, axis=0))
            np.testing.assert_allclose(ours, wpli(z), atol=1e-7)
            self.assertEqual(info["band"]["name"], name)

    def test_fisher_z_rejected_for_phase_consistency(self):
        with self.assertRaises(CritplexError):
            connect(self.series, {"method": "plv", "fisher_z": True})

    def test_several_bands_need_the_set_call(self):
        with self.assertRaises(CritplexError) as caught:
            connect(self.series, {"method": "plv", "sampling_interval": 1 / self.fs,
                                  "bands": {"alpha": [8, 13], "beta": [13, 30]}})
        self.assertIn("cpx_connect_bands", str(caught.exception))


if __name__ == "__main__":
    unittest.main()
