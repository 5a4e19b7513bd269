"""Which BLAS numpy is using, read from the libraries this process has mapped: a ratio against
numpy on Debian's reference BLAS (libblas3) would flatter stepgate ten times over, so the bench
names it beside every numpy figure."""


def blas_name():
    try:
        with open("/proc/self/maps") as maps:
            libs = {line.split()[-1] for line in maps if ".so" in line}
    except OSError:
        return "BLAS unknown"
    names = " ".join(sorted(libs))
    if "openblas-pthread" in names:
        return "OpenBLAS (pthread)"
    if "openblas-openmp" in names:
        return "OpenBLAS (OpenMP)"
    if "openblas" in names:
        return "OpenBLAS"
    if "blis" in names:
        return "BLIS"
    if "libmkl" in names:
        return "MKL"
    if "/blas/libblas" in names or "libblas.so" in names:
        return "reference BLAS, not OpenBLAS: run scripts/setup --bench"
    return "BLAS unknown"
