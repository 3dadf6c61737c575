#!/bin/sh
# Installs the build into a temporary prefix and builds a small C program
# against it through pkg-config, as another project would: with the plain
# 'pkg-config --cflags --libs' line (which must link whether the library is
# static or shared) and with '--static'.  The program reads a CSV with the
# library and summarises it.
#   install_check.sh BUILD_DIR
set -eu
build=$1
prefix=$(mktemp -d)
trap 'rm -rf "$prefix"' EXIT
cmake --install "$build" --prefix "$prefix" >/dev/null
for f in bin/scatterprop include/scatterprop/core.h include/scatterprop/ingest.h \
         include/scatterprop/run.h share/man/man1/scatterprop.1 \
         share/scatterprop/plots/style.gp share/scatterprop/plots/fit_hist.gp \
         share/doc/scatterprop/docs/csv-input.md share/doc/scatterprop/LICENSE; do
  [ -e "$prefix/$f" ] || { echo "install_check: $f was not installed"; exit 1; }
done
# No private header of src/ may be installed.
if find "$prefix/include" -name '*_internal.h' | grep -q .; then
  echo "install_check: a private header was installed"; exit 1
fi
pc=$(find "$prefix" -name scatterprop.pc | head -n 1)
[ -n "$pc" ] || { echo "install_check: no scatterprop.pc installed"; exit 1; }
PKG_CONFIG_PATH=$(dirname "$pc")
export PKG_CONFIG_PATH
cat > "$prefix/use.c" <<'C'
#include <stdio.h>
#include <string.h>
#include <gsl/gsl_errno.h>
#include <scatterprop/dist.h>
#include <scatterprop/summary.h>
int main(int argc, char **argv)
{
  gsl_set_error_handler_off();
  const sp_family *f = sp_family_find("normal");
  double theta[2] = {0.0, 1.0};
  /* P(Z <= 0) = 1/2 exactly for the standard normal. */
  if (argc != 2 || !f || f->cdf_P(theta, 0.0) != 0.5) return 1;
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  sp_summary_set *s = NULL;
  if (sp_table_read(argv[1], NULL, &t, &err) != SP_OK ||
      sp_summary_build(t, NULL, 0, NULL, &s, &err) != SP_OK) {
    char buf[2048];
    sp_error_format(&err, buf, sizeof buf);
    fprintf(stderr, "use: %s\n", buf);
    return 1;
  }
  /* The mean of 1, 2, 3 and 6 is 3 exactly. */
  int ok = s->nblocks == 1 && s->blocks[0].rows[0].d.mean == 3.0;
  printf("%s %s mean %g\n", sp_version(), t->cols[0].unit_text, s->blocks[0].rows[0].d.mean);
  sp_summary_set_free(s);
  sp_table_free(t);
  return ok ? 0 : 1;
}
C
printf '# gauge: G1\nx [mm]\n1\n2\n3\n6\n' > "$prefix/x.csv"
for how in "" "--static"; do
  # shellcheck disable=SC2046,SC2086
  cc "$prefix/use.c" -o "$prefix/use" $(pkg-config --cflags --libs $how scatterprop) || {
    echo "install_check: linking with 'pkg-config --cflags --libs $how scatterprop' failed"
    exit 1
  }
  # A shared library is found as any consumer would find it outside the
  # system's folders; the installed program needs no help (its RPATH).
  LD_LIBRARY_PATH=$(pkg-config --variable=libdir scatterprop) "$prefix/use" "$prefix/x.csv"
done
"$prefix/bin/scatterprop" --version
# The installed program runs from the prefix and finds its installed
# gnuplot templates there (SCATTERPROP_PLOTS unset, no source tree).
env -u SCATTERPROP_PLOTS "$prefix/bin/scatterprop" summary "$prefix/x.csv" >/dev/null
env -u SCATTERPROP_PLOTS "$prefix/bin/scatterprop" fit "$prefix/x.csv" --column x \
  --families normal --pvalues none --plots "$prefix/charts" >/dev/null 2>&1 || {
  echo "install_check: the installed program could not draw a fit's charts"; exit 1
}
[ -s "$prefix/charts/fit_x_hist.gp" ] || {
  echo "install_check: no chart script from the installed templates"; exit 1
}
