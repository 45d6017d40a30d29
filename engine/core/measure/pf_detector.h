/* pf_detector.h - camera models that turn a column density into what a
 * detector reports: Gaussian point-spread function, binning into pixels,
 * detection efficiency and atom number, Poisson shot noise, and optical depth
 * for absorption imaging by the Beer-Lambert law.
 *
 * Model assumptions (also in docs/measurements.md): the imaging optics are a
 * linear, shift-invariant system with a Gaussian point-spread function; each
 * atom is detected independently with the same probability, so detected
 * counts per pixel are Poisson distributed; absorption follows Beer-Lambert
 * with a fixed cross-section, i.e. probe saturation, optical pumping, recoil
 * heating during the pulse and multiple scattering are neglected. */
#ifndef PF_DETECTOR_H
#define PF_DETECTOR_H

#include "pf_field.h"
#include "pf_random.h"

/* Resonant absorption cross-section of a closed two-level transition,
 * 3 lambda^2 / (2 pi) (m^2), for wavelength lambda (m).  Weaker for real
 * multi-level atoms, polarisation and detuning; scale it accordingly. */
double pf_resonant_cross_section(double wavelength);

/* Convolves a 1D or 2D field in place with a normalised Gaussian of standard
 * deviation sigma[a] (m) per axis; sigma[a] = 0 leaves that axis alone.  The
 * kernel is integrated over each cell (erf differences) and cut at 6 sigma, so
 * the sum of the values is kept except for what is blurred beyond the edges. */
pf_status pf_field_blur(pf_field *f, const double *sigma);

/* Camera geometry: pixel pitch (m), pixel count and the position of the outer
 * corner of pixel (1, 1) (the lowest coordinate on each axis). */
typedef struct pf_camera {
    int dim;                 /* 1 (line sensor) or 2 */
    size_t pixels[2];
    double pitch[2];
    double corner[2];
} pf_camera;

/* Integrates a density field over each pixel's area: out becomes a field of
 * pixel values (same unit as the density times area, e.g. probability per
 * pixel) with axes at the pixel centres.  Cells that straddle a pixel edge
 * are split by overlap length (the density is taken constant over a cell).
 * The total is conserved for the part of the field the sensor covers. */
pf_status pf_field_bin(const pf_field *f, const pf_camera *cam, pf_field *out);

/* Replaces every value v by a Poisson deviate of mean v, drawn in row-major
 * order from r (so the same generator state gives the same image). */
pf_status pf_field_poisson(pf_field *f, pf_rng *r);

/* Multiplies every value by factor (efficiency times atom number). */
void pf_field_scale(pf_field *f, double factor);

/* Optical depth of each pixel from atoms per pixel: OD = sigma N_pixel / A
 * with A the pixel area (pitch product), written into od (same geometry). */
pf_status pf_field_optical_depth(const pf_field *atoms, double cross_section, pf_field *od);

/* Atom number an absorption image reports: sum(OD) A / sigma, the inverse of
 * pf_field_optical_depth summed over the 2D image od (pixel area A, the
 * product of its steps). */
double pf_field_atoms_from_optical_depth(const pf_field *od, double cross_section);

/* Replaces each optical depth by the fraction of the probe intensity that
 * passes, exp(-OD) (Beer-Lambert law). */
void pf_field_transmission(pf_field *od);

#endif
