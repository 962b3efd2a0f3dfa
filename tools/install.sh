#!/usr/bin/env bash
# Publishes decohere as a native executable into a folder and links it into ~/.local/bin.
#   tools/install.sh [PREFIX]      PREFIX defaults to ~/.local/share/decohere
# The plots' native libraries (SkiaSharp, HarfBuzz) and ParquetSharp's sit beside the executable, so the whole folder
# is the installation; the link is what puts `decohere` on the PATH.
set -euo pipefail

root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
prefix="${1:-$HOME/.local/share/decohere}"
bin="${DECOHERE_BIN_DIR:-$HOME/.local/bin}"

dotnet publish "$root/src/Decohere.Cli" -c Release -o "$prefix" --nologo
mkdir -p "$bin"
ln -sfn "$prefix/decohere" "$bin/decohere"
"$bin/decohere" --version >/dev/null
echo "installed: $bin/decohere -> $prefix/decohere"
case ":$PATH:" in
  *":$bin:"*) ;;
  *) echo "note: $bin is not on your PATH; add it, e.g. echo 'export PATH=\"$bin:\$PATH\"' >> ~/.bashrc" ;;
esac
