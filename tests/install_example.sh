#!/bin/sh
# Install the built project into a scratch prefix, compile the example program
# of docs/examples against the installed package found through pkg-config,
# and run it.  Arguments: build dir, source dir, extra compiler flags.
set -eu
build=$1
src=$2
extra=${3:-}
prefix=$build/install-test
rm -rf "$prefix"
cmake --install "$build" --prefix "$prefix" >/dev/null
export PKG_CONFIG_PATH="$prefix/lib/pkgconfig:$prefix/lib/x86_64-linux-gnu/pkgconfig"
flags=$(pkg-config --cflags --libs sheetwalk)
# shellcheck disable=SC2086
cc -std=c11 -Wall -Wextra -Werror $extra -o "$prefix/loop_example" \
  "$src/docs/examples/loop_example.c" $flags
out=$("$prefix/loop_example")
echo "$out"
# z^(1/3) once around 0: the ratio is exp(2 pi i/3) = -0.5 + 0.866...i (DLMF 4.2.26)
echo "$out" | grep -q "ratio -0.500000000000+0.866025403784i"
# w^2 = z(z-1) around 0 alone swaps the two sheets (a simple branch point;
# common practice, no source)
echo "$out" | grep -q "permutation 2 1"
echo "installed package: ok"
