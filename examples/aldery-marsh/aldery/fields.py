"""Numeric helpers of the generator (numpy only): smooth random fields made by
filtering white noise in the frequency domain (on a coarser grid for large scales,
then interpolated), block means to coarser pixels, and seasonal ramps."""
import numpy as np


def fft_size(n):
    """The smallest size >= n with no prime factor above 5 (fast FFTs)."""
    while True:
        m = n
        for p in (2, 3, 5):
            while m % p == 0:
                m //= p
        if m == 1:
            return n
        n += 1


def _filtered_noise(rng, shape, sigma):
    """White noise on `shape` filtered by a Gaussian of `sigma` cells (periodic)."""
    shape = (fft_size(shape[0]), fft_size(shape[1]))
    noise = rng.standard_normal(shape)
    fy = np.fft.fftfreq(shape[0])[:, None]
    fx = np.fft.rfftfreq(shape[1])[None, :]
    gain = np.exp(-2.0 * (np.pi * sigma) ** 2 * (fx ** 2 + fy ** 2))
    field = np.fft.irfft2(np.fft.rfft2(noise) * gain, s=shape)
    return field / field.std()


def upsample(coarse, factor, shape):
    """Bilinear interpolation of `coarse` (cells `factor` times larger) onto `shape`."""
    def axis(n, m):
        pos = np.clip((np.arange(n) + 0.5) / factor - 0.5, 0, m - 1)
        low = np.minimum(np.floor(pos).astype(int), m - 2)
        return low, (pos - low).astype(np.float32)
    r0, rw = axis(shape[0], coarse.shape[0])
    c0, cw = axis(shape[1], coarse.shape[1])
    rows = coarse[r0] * (1 - rw[:, None]) + coarse[r0 + 1] * rw[:, None]
    return rows[:, c0] * (1 - cw[None, :]) + rows[:, c0 + 1] * cw[None, :]


def smooth_field(rng, shape, scale):
    """Zero-mean, unit-std random field varying over about `scale` cells."""
    factor = max(1, int(scale // 4))
    coarse_shape = (shape[0] // factor + 4, shape[1] // factor + 4)
    field = _filtered_noise(rng, coarse_shape, scale / factor)[2:, 2:].astype(np.float32)
    if factor > 1:
        field = upsample(field, factor, shape)
    field = np.ascontiguousarray(field[:shape[0], :shape[1]])
    field -= field.mean()
    field /= field.std()
    return field


def block_mean(values, factor):
    """Mean over factor x factor blocks of the last two axes."""
    *lead, h, w = values.shape
    return values.reshape(*lead, h // factor, factor, w // factor, factor).mean(axis=(-3, -1))


def block_any(mask, factor):
    h, w = mask.shape
    return mask.reshape(h // factor, factor, w // factor, factor).any(axis=(1, 3))


def ramp(t, start, end):
    """0 before `start`, 1 after `end`, smooth in between (arrays allowed)."""
    x = np.clip((t - np.asarray(start, np.float32)) / (np.asarray(end, np.float32) - start), 0, 1)
    return (x * x * (3 - 2 * x)).astype(np.float32)


def day_of_year(date):
    import datetime
    return datetime.date.fromisoformat(date).timetuple().tm_yday
