"""Independent reference values of the dipole sums S(k), L(k) for 1s and 2p.

Run by crates/bethe/tests/sums.rs (test `mpmath_reference`). Everything here
uses mpmath only; nothing is shared with the Rust code.

* 1s: closed forms of the oscillator strengths (Bethe & Salpeter, Quantum
  Mechanics of One- and Two-Electron Atoms (1957), from memory):
  f(1s -> n p) = 2^8 n^5 (n-1)^(2n-4) / (3 (n+1)^(2n+4)), and the continuum
  density per Rydberg at photo-electron energy eps = q^2 (Ry),
  df/deps = 2^7 exp(-4 arctan(q)/q) / (3 (1+q^2)^4 (1 - exp(-2 pi/q))).
  The bound series is summed with mpmath.nsum, the continuum with
  mpmath.quad. The exact sum rules S(0) = 1, S(-2) = 9/8 are printed too,
  so that the formulas are tested along with the values.
* 2p: pseudostates. The radial Hamiltonian of each channel (L = 0, 2) is
  diagonalized (mpmath.eigsy after a Cholesky step) in the basis
  r^(L+1+i) exp(-r/2), i < N, whose matrix elements are closed-form
  factorial integrals; S(k), L(k) are the sums over the pseudostates
  (the same-n state, D = 0, left out). Two basis sizes give the error
  estimate. Only k <= 0 are printed: for k >= 1 the sums converge slowly in
  the basis size.

Output: one line per value, `state k S L err` (err = estimated error of
both S and L).
"""
import sys
import mpmath as mp


def one_s(ks):
    mp.mp.dps = 40

    def f_bound(n):
        n = mp.mpf(n)
        return 2**8 * n**5 * (n - 1) ** (2 * n - 4) / (3 * (n + 1) ** (2 * n + 4))

    def dfde(eps):
        q = mp.sqrt(eps)
        return 2**7 * mp.exp(-4 * mp.atan(q) / q) / (3 * (1 + eps) ** 4 * (1 - mp.exp(-2 * mp.pi / q)))

    out = []
    for k in ks:
        for log in (False, True):
            def weight(d):
                return d**k * (mp.log(d) if log else 1)

            bound = mp.nsum(lambda n: f_bound(n) * weight(1 - 1 / mp.mpf(n) ** 2), [2, mp.inf])
            cont = mp.quad(lambda e: dfde(e) * weight(1 + e), [0, 1, 10, 100, 1000, mp.inf])
            out.append(bound + cont)
    return out


def laguerre_sums(n, l, nbasis, ks, dps):
    mp.mp.dps = dps
    kap = mp.mpf(1) / n
    en = -kap**2 / 2
    # u_nl = r R_nl as coefficients of r^p exp(-r/n)
    nr = n - l - 1
    norm = mp.sqrt((2 * kap) ** 3 * mp.factorial(nr) / (2 * n * mp.factorial(n + l)))
    u = {}
    for i in range(nr + 1):
        c = (-1) ** i * mp.binomial(nr + 2 * l + 1, nr - i) / mp.factorial(i)
        u[l + 1 + i] = norm * c * (2 * kap) ** (l + i)

    def integral(m, a):
        return mp.factorial(m) / a ** (m + 1)

    s = {k: mp.mpf(0) for k in ks}
    lg = {k: mp.mpf(0) for k in ks}
    chans = [(l + 1, mp.mpf(l + 1) / (2 * l + 1))]
    if l > 0:
        chans.append((l - 1, mp.mpf(l) / (2 * l + 1)))
    for big_l, w in chans:
        lam = kap
        p = [big_l + 1 + i for i in range(nbasis)]
        smat = mp.matrix(nbasis, nbasis)
        hmat = mp.matrix(nbasis, nbasis)
        for i in range(nbasis):
            for j in range(nbasis):
                a, b = p[i], p[j]
                smat[i, j] = integral(a + b, 2 * lam)
                t = -(b * (b - 1) * integral(a + b - 2, 2 * lam)
                      - 2 * lam * b * integral(a + b - 1, 2 * lam)
                      + lam**2 * integral(a + b, 2 * lam)) / 2
                t += mp.mpf(big_l * (big_l + 1)) / 2 * integral(a + b - 2, 2 * lam)
                t -= integral(a + b - 1, 2 * lam)
                hmat[i, j] = t
        li = mp.inverse(mp.cholesky(smat))
        a = li * hmat * li.T
        a = (a + a.T) / 2
        ev, q = mp.eigsy(a)
        c = li.T * q
        dvec = [sum(cp * integral(p[i] + pw + 1, lam + kap) for pw, cp in u.items()) for i in range(nbasis)]
        for m in range(nbasis):
            d = ev[m] - en
            if abs(d) < mp.mpf(10) ** (-(dps // 2)):
                continue  # the same-n state
            r = sum(c[i, m] * dvec[i] for i in range(nbasis))
            f = mp.mpf(2) / 3 * d * w * r**2
            big_d = 2 * d
            for k in ks:
                s[k] += f * big_d**k
                lg[k] += f * big_d**k * mp.log(abs(big_d))
    return s, lg


def main():
    ks = list(range(-4, 3))
    vals = one_s(ks)
    for i, k in enumerate(ks):
        print("1s", k, mp.nstr(vals[2 * i], 30), mp.nstr(vals[2 * i + 1], 30), "1e-25")
    ks2 = list(range(-4, 1))
    sa, la = laguerre_sums(2, 1, 22, ks2, 60)
    sb, lb = laguerre_sums(2, 1, 28, ks2, 60)
    for k in ks2:
        err = max(abs(sa[k] - sb[k]), abs(la[k] - lb[k]), mp.mpf(10) ** -40)
        print("2p", k, mp.nstr(sb[k], 30), mp.nstr(lb[k], 30), mp.nstr(err, 3))


if __name__ == "__main__":
    sys.exit(main())
