"""Install check of the Python module (ctest python.install): a virtual environment with the system's packages
(numpy, ASE) and no pip, `cmake --install BUILD --component python --prefix VENV` into it, and `import repel` from the
environment's python with no PYTHONPATH: the module and its stubs must come from the environment's site-packages.
No network. Usage: install_check.py CMAKE BUILD_DIR
"""
import os
import subprocess
import sys
import tempfile
from pathlib import Path


def main(cmake, build):
    with tempfile.TemporaryDirectory() as tmp:
        venv = Path(tmp) / "venv"
        subprocess.run([sys.executable, "-m", "venv", "--system-site-packages", "--without-pip", str(venv)], check=True)
        subprocess.run([cmake, "--install", build, "--component", "python", "--prefix", str(venv)], check=True,
                       stdout=subprocess.DEVNULL)
        env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
        code = ("import pathlib, sys, repel; p = pathlib.Path(repel.__file__); "
                "assert p.is_relative_to(sys.prefix), p; assert p.with_name('repel.pyi').is_file(); "
                "assert repel.build('O').elements == ['O', 'H', 'H']; print(p, repel.__version__)")
        out = subprocess.run([str(venv / "bin" / "python"), "-c", code], check=True, env=env, cwd=tmp,
                             capture_output=True, text=True)
        print("imported", out.stdout.strip())
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1], sys.argv[2]))
