/* scatterprop dist: the registry of families.
 *
 * One line per family.  The order is the order of tables and of fitting
 * candidates: the common two-parameter families first (normal, lognormal,
 * Weibull, gamma), then their shifted or one-parameter relatives, the
 * extreme-value and logistic families, and last the bounded families used
 * mainly as model inputs. */
#include "scatterprop/dist.h"

#include <string.h>

#include "dist/dist_common.h"

static const sp_family *const registry[] = {
  &sp_dist_normal,
  &sp_dist_lognormal,
  &sp_dist_weibull,
  &sp_dist_weibull3,
  &sp_dist_gamma,
  &sp_dist_exponential,
  &sp_dist_exponential2,
  &sp_dist_gumbel_max,
  &sp_dist_gumbel_min,
  &sp_dist_logistic,
  &sp_dist_loglogistic,
  &sp_dist_uniform,
  &sp_dist_truncnormal,
  &sp_dist_triangular,
  &sp_dist_beta,
};

#define REGISTRY_N (sizeof registry / sizeof registry[0])

const sp_family *sp_family_find(const char *name)
{
  if (!name) return NULL;
  for (size_t i = 0; i < REGISTRY_N; i++)
    if (strcmp(registry[i]->name, name) == 0) return registry[i];
  return NULL;
}

size_t sp_family_count(void) { return REGISTRY_N; }

const sp_family *sp_family_at(size_t i)
{
  return i < REGISTRY_N ? registry[i] : NULL;
}

int sp_family_param_index(const sp_family *fam, const char *pname)
{
  if (!fam || !pname) return -1;
  for (size_t i = 0; i < fam->nparam; i++)
    if (strcmp(fam->param_names[i], pname) == 0) return (int)i;
  return -1;
}
