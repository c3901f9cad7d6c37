/*
 * Host helper for the orthotone firmware kit: converts trims in the library's units (dB, degrees,
 * samples, full scale) into the kit's own values, and full-scale samples to and from the kit's
 * sample format. Uses libm (pow, cos, sin, floor): call it on the host or at set-up, never per sample.
 */
#ifndef ORTHO_HOST_H
#define ORTHO_HOST_H

#include "ortho_kit.h"

/* Fills t from trims in the library's units (DESIGN.md section 4). gain_db in dB (|.| <= 6),
 * phase_deg in degrees (|.| <= 45), skew_samples (|.| <= ORTHO_MAX_SKEW; must be 0 when the kit
 * has no skew stage), dc_i and dc_q in full-scale units (|.| <= 1), lower_sideband 0 or 1.
 * Returns 0, or -1 (t unchanged) when a value is out of range or not finite. */
int ortho_trims_from_units(ortho_trims_t *t, double gain_db, double phase_deg, double skew_samples,
                           double dc_i, double dc_q, int lower_sideband);
/* Full-scale value (+-1) to a kit sample: round half up and saturate (float: nearest float). */
ortho_sample_t ortho_sample_from_full_scale(double x);
/* Kit sample to full-scale value. */
double ortho_sample_to_full_scale(ortho_sample_t v);

#endif /* ORTHO_HOST_H */
