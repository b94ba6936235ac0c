# Sourced by the comparison scripts: sets py to the first Python that has
# SciPy (the one on PATH, else Debian's), or exits with code 2 naming the
# caller ($1) and the package to install.
py=""
for candidate in python3 /usr/bin/python3; do
  if "$candidate" -c 'import scipy' 2>/dev/null; then py=$candidate; break; fi
done
if [ -z "$py" ]; then
  echo "$1: needs python3-scipy (apt-get install -y python3-scipy)" >&2
  exit 2
fi
