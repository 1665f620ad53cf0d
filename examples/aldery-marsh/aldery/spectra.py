"""Surface reflectance of the invented ground's components at the centres of the
12 Sentinel-2 L2A bands, and what the atmosphere and the sensor add. The numbers
are invented but follow well-known spectral shapes, each with its source below."""
# - Green vegetation absorbs blue and red (chlorophyll), peaks a little in green,
#   rises steeply at the red edge (680-750 nm) to a high near-infrared plateau from
#   leaf scattering, and falls in the short-wave infrared where leaf water absorbs
#   (Jensen, Remote Sensing of the Environment, 2nd ed. 2007, ch. 11; from memory).
# - Senescent plants and straw lose the red absorption and the red edge and reflect
#   more in the SWIR (same source; common practice).
# - Water is brightest in blue-green and absorbs almost everything beyond 750 nm;
#   suspended sediment raises green and red, algae add a green peak and a peak near
#   705 nm (Jensen ch. 12; Gitelson 1992, Int. J. Remote Sensing 13:3367; from memory).
# - Bare soil reflectance rises with wavelength to the SWIR; wet soil is darker
#   across the spectrum, most in the SWIR (Baumgardner et al. 1985, Adv. Agronomy
#   38:1; Lobell and Asner 2002, Soil Sci. Soc. Am. J. 66:722; from memory).
# - Clouds are bright and nearly flat, darker in the SWIR (common practice); cloud
#   shadows keep the diffuse skylight, which is bluer (Rayleigh scattering; common
#   practice).
import numpy as np

BANDS = ["B01", "B02", "B03", "B04", "B05", "B06", "B07", "B08", "B8A", "B09", "B11", "B12"]
CENTRES = np.array([443, 490, 560, 665, 705, 740, 783, 842, 865, 945, 1610, 2190], np.float32)  # nm
RESOLUTION = {"B01": 60, "B02": 10, "B03": 10, "B04": 10, "B05": 20, "B06": 20, "B07": 20, "B08": 10,
              "B8A": 20, "B09": 60, "B11": 20, "B12": 20}  # metres, ESA Sentinel-2 User Handbook (from memory)

#                 B01    B02    B03    B04    B05    B06    B07    B08    B8A    B09    B11    B12
COMPONENTS = {
    "green":        [0.030, 0.035, 0.080, 0.035, 0.130, 0.300, 0.380, 0.420, 0.430, 0.410, 0.220, 0.100],
    "tree":         [0.020, 0.025, 0.055, 0.025, 0.100, 0.260, 0.330, 0.360, 0.370, 0.350, 0.170, 0.070],
    "reed_green":   [0.025, 0.030, 0.065, 0.040, 0.110, 0.230, 0.280, 0.310, 0.320, 0.300, 0.190, 0.090],
    "reed_dead":    [0.040, 0.050, 0.075, 0.095, 0.125, 0.155, 0.175, 0.195, 0.205, 0.210, 0.280, 0.210],
    "straw":        [0.050, 0.070, 0.110, 0.150, 0.190, 0.220, 0.245, 0.265, 0.275, 0.285, 0.360, 0.280],
    "soil":         [0.070, 0.090, 0.130, 0.170, 0.200, 0.220, 0.240, 0.260, 0.270, 0.280, 0.340, 0.290],
    "wet_soil":     [0.040, 0.050, 0.070, 0.090, 0.105, 0.115, 0.125, 0.135, 0.140, 0.135, 0.150, 0.120],
    "water_clear":  [0.060, 0.055, 0.050, 0.025, 0.018, 0.012, 0.010, 0.008, 0.007, 0.005, 0.003, 0.002],
    "water_turbid": [0.070, 0.075, 0.100, 0.085, 0.070, 0.040, 0.035, 0.030, 0.026, 0.015, 0.008, 0.005],
    "water_algal":  [0.045, 0.045, 0.080, 0.045, 0.060, 0.045, 0.040, 0.035, 0.030, 0.015, 0.006, 0.004],
    "roof_tile":    [0.080, 0.090, 0.110, 0.220, 0.260, 0.280, 0.290, 0.300, 0.305, 0.310, 0.360, 0.320],
    "roof_grey":    [0.160, 0.170, 0.190, 0.200, 0.210, 0.215, 0.220, 0.225, 0.228, 0.230, 0.250, 0.230],
    "asphalt":      [0.070, 0.075, 0.085, 0.095, 0.100, 0.105, 0.110, 0.115, 0.117, 0.120, 0.140, 0.130],
    "shade":        [0.0] * 12,  # deep shadow between crowns and buildings: darkens what it mixes with
}
NAMES = list(COMPONENTS)
INDEX = {name: i for i, name in enumerate(NAMES)}
TABLE = np.array([COMPONENTS[n] for n in NAMES], np.float32).T  # (bands, components)

CLOUD = np.array([0.62, 0.60, 0.60, 0.60, 0.60, 0.60, 0.60, 0.59, 0.59, 0.52, 0.40, 0.26], np.float32)
# Share of the reflectance left in a cloud shadow: 0.5 in the blue falling to 0.3 in the SWIR.
SHADOW_LEFT = np.interp(CENTRES, [443, 2190], [0.5, 0.3]).astype(np.float32)
# Residual haze after atmospheric correction scales like wavelength^-1.5 (Angstrom
# exponent 1.5; common practice); 1 at 443 nm.
HAZE = (CENTRES / 443.0) ** -1.5
# Sensor noise, standard deviation in reflectance per band (invented; of the order
# of Sentinel-2's noise-equivalent reflectance, about 0.001-0.004, from memory).
NOISE = np.array([0.004, 0.003, 0.0025, 0.0025, 0.002, 0.002, 0.002, 0.002, 0.002, 0.003, 0.002, 0.002],
                 np.float32)


def mix(fractions, n):
    """Reflectance (bands, n) of component shares {name: array (n) or number}."""
    names = list(fractions)
    shares = np.empty((len(names), n), np.float32)
    for row, name in enumerate(names):
        shares[row] = fractions[name]
    return TABLE[:, [INDEX[name] for name in names]] @ shares
