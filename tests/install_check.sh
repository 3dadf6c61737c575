#!/bin/sh
# Installs the build into a temporary prefix and builds a small C program
# against it through pkg-config, as another project would.
#   install_check.sh BUILD_DIR
set -eu
build=$1
prefix=$(mktemp -d)
trap 'rm -rf "$prefix"' EXIT
cmake --install "$build" --prefix "$prefix" >/dev/null
for f in bin/scatterprop include/scatterprop/core.h include/scatterprop/run.h \
         share/man/man1/scatterprop.1 share/scatterprop/plots/fit_hist.gp; do
  [ -e "$prefix/$f" ] || { echo "install_check: $f was not installed"; exit 1; }
done
pc=$(find "$prefix" -name scatterprop.pc | head -n 1)
[ -n "$pc" ] || { echo "install_check: no scatterprop.pc installed"; exit 1; }
cat > "$prefix/use.c" <<'C'
#include <stdio.h>
#include <string.h>
#include <scatterprop/dist.h>
int main(void)
{
  const sp_family *f = sp_family_find("normal");
  double theta[2] = {0.0, 1.0};
  /* P(Z <= 0) = 1/2 exactly for the standard normal. */
  if (!f || f->cdf_P(theta, 0.0) != 0.5) return 1;
  printf("%s\n", sp_version());
  return 0;
}
C
PKG_CONFIG_PATH=$(dirname "$pc") cc "$prefix/use.c" -o "$prefix/use" \
  $(PKG_CONFIG_PATH=$(dirname "$pc") pkg-config --cflags --libs --static scatterprop)
"$prefix/use"
"$prefix/bin/scatterprop" --version
