/* scatterprop units: a small wrapper over udunits2.
 *
 * Units are parsed from the text between brackets in a CSV header cell
 * ("wire_d [mm]") or a model file.  All conversions are affine (scale and
 * offset); nothing unit-related runs per sample. */
#ifndef SP_UNITS_H
#define SP_UNITS_H

#include "scatterprop/core.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct sp_unit sp_unit;

/* Loads the unit database once per process (thread-safe; later calls return
 * at once).  Called implicitly by sp_unit_parse. */
sp_status sp_units_init(sp_error *err);

/* Returns owned (free with sp_unit_free): the unit named by text, e.g.
 * "mm", "N/mm", "GPa", "1" (dimensionless).  An empty text or "1" is the
 * dimensionless unit.  Unknown names and bad syntax are SP_EDATA errors
 * quoting the text.  Besides udunits2's own syntax errors, three forms it
 * would silently misread are refused: unbalanced parentheses ("mm)" reads
 * as mm), a division by a number ("MPa.m1/2" reads as MPa.m/2) and a
 * non-integer exponent ("m^0.5" reads as 5).  SP_EIO when the unit
 * database cannot be loaded (its path is in the message). */
sp_unit *sp_unit_parse(const char *text, sp_error *err);
/* Returns owned: the dimensionless unit. */
sp_unit *sp_unit_one(sp_error *err);
void sp_unit_free(sp_unit *u);
/* Returns owned: a copy, a product, a quotient, an integer power. */
sp_unit *sp_unit_copy(const sp_unit *u, sp_error *err);
sp_unit *sp_unit_multiply(const sp_unit *a, const sp_unit *b, sp_error *err);
sp_unit *sp_unit_divide(const sp_unit *a, const sp_unit *b, sp_error *err);
sp_unit *sp_unit_raise(const sp_unit *a, int power, sp_error *err);
/* Returns owned: the n-th root (e.g. sqrt is n = 2), or NULL with an error
 * when the dimensions are not divisible by n. */
sp_unit *sp_unit_root(const sp_unit *a, int n, sp_error *err);

/* The text the unit was parsed from, without its surrounding blanks
 * (borrowed).  For derived units: a text composed from the operands' texts
 * ("N/mm", "(N/mm)^2", "mm" for the square root of "mm2") when it parses
 * back to the same unit, else udunits2's symbol form ("1000 kg·s⁻²"). */
const char *sp_unit_text(const sp_unit *u);
/* Writes udunits2's definition of u in base units, ASCII where possible
 * ("m.kg.s-2" for N, "0.001 m" for mm, "K @ 273.15" for degC), for
 * messages; returns the length it would have written (as snprintf). */
int sp_unit_format(const sp_unit *u, char *buf, size_t n);

/* Non-zero when values in unit a can be converted to unit b. */
int sp_unit_convertible(const sp_unit *a, const sp_unit *b);
/* Non-zero when u is dimensionless (convertible to "1"). */
int sp_unit_is_dimensionless(const sp_unit *u);
/* The affine conversion from a to b: value_b = scale * value_a + offset.
 * SP_EDATA naming both units when they are not convertible, or when the
 * conversion is not affine (logarithmic units such as "lg(re 1 mW)"). */
sp_status sp_unit_conversion(const sp_unit *a, const sp_unit *b, double *scale,
                             double *offset, sp_error *err);

#ifdef __cplusplus
}
#endif
#endif /* SP_UNITS_H */
