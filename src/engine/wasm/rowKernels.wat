;; The engine's scalar row kernels in WebAssembly (rowKernels.ts), each the same operations in
;; the same order as its JavaScript path, so every value is the same to the bit: the E-step
;; kernel's memberships and each row's ln Σ_k exp(term_k) by log-sum-exp (logDensities.ts,
;; as membershipsFromLogTerms), the M-step's sizes Σ_i τ_ik, and the warm start's subspace
;; EM residual pass, the distances of the seeding's k-means (starts.ts) and hard
;; assignment's choice of component (warmStart/alternatingLeastSquares.ts) and the warm
;; start's projection onto its subspace (rowProducts) and its whitening (whitenRows).
;; Assembled by scripts/buildWasm.mjs into rowKernelsModule.ts; a test
;; checks the two agree. No SIMD: it runs wherever WebAssembly does.
;;
;; Compiled code of its own from the first call: the JavaScript loop runs interpreted until
;; the engine's optimising compiler has reached it, most of a small fit's first E-steps in a
;; fresh process.
;;
;; $exp and $log are fdlibm's __ieee754_exp and __ieee754_log (Sun Microsystems 1993, the
;; algorithms and constants of e_exp.c and e_log.c), which is also what V8 computes Math.exp
;; and Math.log with: a test compares them with Math.exp and Math.log to the bit. Every step is
;; an IEEE 754 double operation, which WebAssembly rounds the same way on every machine.
;; Pointers are byte offsets into the exported memory; counts are in doubles.
(module
  (memory (export "memory") 1)

  ;; e^x for -37 < x ≤ 0, the only arguments the kernel passes (fdlibm's overflow, underflow
  ;; and NaN filters are left out): x = k ln 2 + r, |r| ≤ ½ ln 2, with ln 2 split in two
  ;; (hi exact in k·hi), e^r from a degree-5 minimax polynomial R in r², e^x = 2^k e^r.
  (func $exp (param $x f64) (result f64)
    (local $hx i32) (local $negative i32) (local $k i32)
    (local $hi f64) (local $lo f64) (local $t f64) (local $c f64)
    (local.set $hx (i32.wrap_i64 (i64.shr_u (i64.reinterpret_f64 (local.get $x)) (i64.const 32))))
    (local.set $negative (i32.shr_u (local.get $hx) (i32.const 31)))
    (local.set $hx (i32.and (local.get $hx) (i32.const 0x7fffffff)))
    (if (i32.gt_u (local.get $hx) (i32.const 0x3fd62e42)) ;; |x| > ½ ln 2
      (then
        (if (i32.lt_u (local.get $hx) (i32.const 0x3ff0a2b2)) ;; and |x| < 1.5 ln 2: k = ±1
          (then
            (if (local.get $negative)
              (then
                (local.set $hi (f64.add (local.get $x) (f64.const 0x1.62e42fee00000p-1)))
                (local.set $lo (f64.const -0x1.a39ef35793c76p-33))
                (local.set $k (i32.const -1)))
              (else
                (local.set $hi (f64.sub (local.get $x) (f64.const 0x1.62e42fee00000p-1)))
                (local.set $lo (f64.const 0x1.a39ef35793c76p-33))
                (local.set $k (i32.const 1)))))
          (else
            (local.set $k (i32.trunc_f64_s (f64.add
              (f64.mul (f64.const 0x1.71547652b82fep0) (local.get $x))
              (select (f64.const -0.5) (f64.const 0.5) (local.get $negative)))))
            (local.set $t (f64.convert_i32_s (local.get $k)))
            (local.set $hi (f64.sub (local.get $x) (f64.mul (local.get $t) (f64.const 0x1.62e42fee00000p-1))))
            (local.set $lo (f64.mul (local.get $t) (f64.const 0x1.a39ef35793c76p-33)))))
        (local.set $x (f64.sub (local.get $hi) (local.get $lo))))
      (else
        (if (i32.lt_u (local.get $hx) (i32.const 0x3e300000)) ;; |x| < 2⁻²⁸
          (then (return (f64.add (f64.const 1) (local.get $x)))))))
    (local.set $t (f64.mul (local.get $x) (local.get $x)))
    (local.set $c (f64.sub (local.get $x) (f64.mul (local.get $t)
      (f64.add (f64.const 0x1.555555555553ep-3) (f64.mul (local.get $t)
      (f64.add (f64.const -0x1.6c16c16bebd93p-9) (f64.mul (local.get $t)
      (f64.add (f64.const 0x1.1566aaf25de2cp-14) (f64.mul (local.get $t)
      (f64.add (f64.const -0x1.bbd41c5d26bf1p-20) (f64.mul (local.get $t) (f64.const 0x1.6376972bea4d0p-25))))))))))))
    (if (i32.eqz (local.get $k))
      (then (return (f64.sub (f64.const 1)
        (f64.sub (f64.div (f64.mul (local.get $x) (local.get $c)) (f64.sub (local.get $c) (f64.const 2))) (local.get $x))))))
    ;; (1 − ((lo − x c / (2 − c)) − hi)) · 2^k, 2^k built from its exponent bits.
    (f64.mul
      (f64.sub (f64.const 1)
        (f64.sub (f64.sub (local.get $lo) (f64.div (f64.mul (local.get $x) (local.get $c)) (f64.sub (f64.const 2) (local.get $c)))) (local.get $hi)))
      (f64.reinterpret_i64 (i64.shl
        (i64.extend_i32_u (i32.add (i32.const 0x3ff00000) (i32.shl (local.get $k) (i32.const 20))))
        (i64.const 32)))))

  ;; ln x for every double: x = 2^k (1 + f) with 1 + f in [√2/2, √2), s = f / (2 + f),
  ;; ln(1 + f) = 2s + s·R(s²) with a degree-7 minimax R (split in odd and even powers of s⁴).
  (func $log (param $x f64) (result f64)
    (local $bits i64) (local $hx i32) (local $k i32) (local $i i32) (local $j i32)
    (local $f f64) (local $s f64) (local $z f64) (local $w f64) (local $r f64) (local $dk f64) (local $hfsq f64)
    (local.set $bits (i64.reinterpret_f64 (local.get $x)))
    (local.set $hx (i32.wrap_i64 (i64.shr_u (local.get $bits) (i64.const 32))))
    (if (i32.lt_s (local.get $hx) (i32.const 0x00100000)) ;; below 2⁻¹⁰²², zero or negative
      (then
        (if (i64.eqz (i64.and (local.get $bits) (i64.const 0x7fffffffffffffff)))
          (then (return (f64.const -inf))))
        (if (i32.lt_s (local.get $hx) (i32.const 0))
          (then (return (f64.const nan))))
        ;; subnormal: scaled up by 2⁵⁴
        (local.set $k (i32.const -54))
        (local.set $x (f64.mul (local.get $x) (f64.const 0x1.0000000000000p54)))
        (local.set $bits (i64.reinterpret_f64 (local.get $x)))
        (local.set $hx (i32.wrap_i64 (i64.shr_u (local.get $bits) (i64.const 32))))))
    (if (i32.ge_s (local.get $hx) (i32.const 0x7ff00000)) ;; infinity or NaN
      (then (return (f64.add (local.get $x) (local.get $x)))))
    (local.set $k (i32.add (local.get $k) (i32.sub (i32.shr_s (local.get $hx) (i32.const 20)) (i32.const 1023))))
    (local.set $hx (i32.and (local.get $hx) (i32.const 0x000fffff)))
    (local.set $i (i32.and (i32.add (local.get $hx) (i32.const 0x95f64)) (i32.const 0x100000)))
    ;; normalise x or x/2: the high word becomes hx | (i ^ 0x3ff00000), the low word stays
    (local.set $x (f64.reinterpret_i64 (i64.or
      (i64.and (local.get $bits) (i64.const 0xffffffff))
      (i64.shl (i64.extend_i32_u (i32.or (local.get $hx) (i32.xor (local.get $i) (i32.const 0x3ff00000)))) (i64.const 32)))))
    (local.set $k (i32.add (local.get $k) (i32.shr_s (local.get $i) (i32.const 20))))
    (local.set $f (f64.sub (local.get $x) (f64.const 1)))
    (local.set $dk (f64.convert_i32_s (local.get $k)))
    (if (i32.lt_s (i32.and (i32.const 0x000fffff) (i32.add (i32.const 2) (local.get $hx))) (i32.const 3)) ;; |f| < 2⁻²⁰
      (then
        (if (f64.eq (local.get $f) (f64.const 0))
          (then
            (if (i32.eqz (local.get $k)) (then (return (f64.const 0))))
            (return (f64.add (f64.mul (local.get $dk) (f64.const 0x1.62e42fee00000p-1)) (f64.mul (local.get $dk) (f64.const 0x1.a39ef35793c76p-33))))))
        (local.set $r (f64.mul (f64.mul (local.get $f) (local.get $f))
          (f64.sub (f64.const 0.5) (f64.mul (f64.const 0x1.5555555555555p-2) (local.get $f)))))
        (if (i32.eqz (local.get $k)) (then (return (f64.sub (local.get $f) (local.get $r)))))
        (return (f64.sub (f64.mul (local.get $dk) (f64.const 0x1.62e42fee00000p-1))
          (f64.sub (f64.sub (local.get $r) (f64.mul (local.get $dk) (f64.const 0x1.a39ef35793c76p-33))) (local.get $f))))))
    (local.set $s (f64.div (local.get $f) (f64.add (f64.const 2) (local.get $f))))
    (local.set $z (f64.mul (local.get $s) (local.get $s)))
    (local.set $i (i32.sub (local.get $hx) (i32.const 0x6147a)))
    (local.set $w (f64.mul (local.get $z) (local.get $z)))
    (local.set $j (i32.sub (i32.const 0x6b851) (local.get $hx)))
    ;; R = t2 + t1, t1 = w (Lg2 + w (Lg4 + w Lg6)), t2 = z (Lg1 + w (Lg3 + w (Lg5 + w Lg7)))
    (local.set $r (f64.add
      (f64.mul (local.get $z)
        (f64.add (f64.const 0x1.5555555555593p-1) (f64.mul (local.get $w)
        (f64.add (f64.const 0x1.2492494229359p-2) (f64.mul (local.get $w)
        (f64.add (f64.const 0x1.7466496cb03dep-3) (f64.mul (local.get $w) (f64.const 0x1.2f112df3e5244p-3))))))))
      (f64.mul (local.get $w)
        (f64.add (f64.const 0x1.999999997fa04p-2) (f64.mul (local.get $w)
        (f64.add (f64.const 0x1.c71c51d8e78afp-3) (f64.mul (local.get $w) (f64.const 0x1.39a09d078c69fp-3))))))))
    (if (i32.gt_s (i32.or (local.get $i) (local.get $j)) (i32.const 0))
      (then
        (local.set $hfsq (f64.mul (f64.mul (f64.const 0.5) (local.get $f)) (local.get $f)))
        (if (i32.eqz (local.get $k))
          (then (return (f64.sub (local.get $f) (f64.sub (local.get $hfsq) (f64.mul (local.get $s) (f64.add (local.get $hfsq) (local.get $r))))))))
        (return (f64.sub (f64.mul (local.get $dk) (f64.const 0x1.62e42fee00000p-1))
          (f64.sub
            (f64.sub (local.get $hfsq) (f64.add (f64.mul (local.get $s) (f64.add (local.get $hfsq) (local.get $r))) (f64.mul (local.get $dk) (f64.const 0x1.a39ef35793c76p-33))))
            (local.get $f))))))
    (if (i32.eqz (local.get $k))
      (then (return (f64.sub (local.get $f) (f64.mul (local.get $s) (f64.sub (local.get $f) (local.get $r)))))))
    (f64.sub (f64.mul (local.get $dk) (f64.const 0x1.62e42fee00000p-1))
      (f64.sub
        (f64.sub (f64.mul (local.get $s) (f64.sub (local.get $f) (local.get $r))) (f64.mul (local.get $dk) (f64.const 0x1.a39ef35793c76p-33)))
        (local.get $f))))

  ;; One row (membershipsFromLogTerms): the k log terms at $terms into memberships at $out
  ;; (the same place allowed); returns ln Σ exp(term). The largest term's own is exp(0) = 1;
  ;; one more than 37 below it is exactly 0, as ln(2⁻⁵³) ≈ −36.7 (NEGLIGIBLE_LOG_RATIO); a row
  ;; whose other terms are all negligible keeps 0 and 1 with no division and no logarithm.
  (func $row (param $terms i32) (param $k i32) (param $out i32) (result f64)
    (local $c i32) (local $at i32) (local $largest f64) (local $value f64) (local $e f64) (local $sum f64) (local $inverse f64)
    (local.set $largest (f64.const -inf))
    (local.set $c (i32.const 0))
    (block $scanned
      (loop $scan
        (br_if $scanned (i32.ge_u (local.get $c) (local.get $k)))
        (local.set $value (f64.load (i32.add (local.get $terms) (i32.shl (local.get $c) (i32.const 3)))))
        (if (f64.gt (local.get $value) (local.get $largest))
          (then
            (local.set $largest (local.get $value))
            (local.set $at (local.get $c))))
        (local.set $c (i32.add (local.get $c) (i32.const 1)))
        (br $scan)))
    (local.set $c (i32.const 0))
    (block $summed
      (loop $add
        (br_if $summed (i32.ge_u (local.get $c) (local.get $k)))
        (local.set $value (f64.sub (f64.load (i32.add (local.get $terms) (i32.shl (local.get $c) (i32.const 3)))) (local.get $largest)))
        (local.set $e (f64.const 0))
        (if (f64.gt (local.get $value) (f64.const -37))
          (then
            (local.set $e
              (if (result f64) (i32.eq (local.get $c) (local.get $at))
                (then (f64.const 1))
                (else (call $exp (local.get $value)))))))
        (f64.store (i32.add (local.get $out) (i32.shl (local.get $c) (i32.const 3))) (local.get $e))
        (local.set $sum (f64.add (local.get $sum) (local.get $e)))
        (local.set $c (i32.add (local.get $c) (i32.const 1)))
        (br $add)))
    (if (f64.eq (local.get $sum) (f64.const 1))
      (then (return (f64.add (local.get $largest) (f64.const 0)))))
    (local.set $inverse (f64.div (f64.const 1) (local.get $sum)))
    (local.set $c (i32.const 0))
    (block $scaled
      (loop $scale
        (br_if $scaled (i32.ge_u (local.get $c) (local.get $k)))
        (local.set $value (f64.load (i32.add (local.get $out) (i32.shl (local.get $c) (i32.const 3)))))
        (f64.store (i32.add (local.get $out) (i32.shl (local.get $c) (i32.const 3))) (f64.mul (local.get $value) (local.get $inverse)))
        (local.set $c (i32.add (local.get $c) (i32.const 1)))
        (br $scale)))
    (f64.add (local.get $largest) (call $log (local.get $sum))))

  ;; m rows of k log terms (row-major at $terms) into memberships at $out (the same place
  ;; allowed) and each row's value at $rows; returns $total plus the rows' values, added in
  ;; row order.
  (func (export "normalise") (param $terms i32) (param $m i32) (param $k i32) (param $out i32) (param $rows i32) (param $total f64) (result f64)
    (local $i i32) (local $rowBytes i32) (local $value f64)
    (local.set $rowBytes (i32.shl (local.get $k) (i32.const 3)))
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $i) (local.get $m)))
        (local.set $value (call $row (local.get $terms) (local.get $k) (local.get $out)))
        (f64.store (local.get $rows) (local.get $value))
        (local.set $total (f64.add (local.get $total) (local.get $value)))
        (local.set $terms (i32.add (local.get $terms) (local.get $rowBytes)))
        (local.set $out (i32.add (local.get $out) (local.get $rowBytes)))
        (local.set $rows (i32.add (local.get $rows) (i32.const 8)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $next)))
    (local.get $total))

  ;; The regression E-step from residuals: for m rows of k residuals r (row-major at
  ;; $residuals) the terms constant_c + curvature_c · r · r (multiplied in that order) go to
  ;; the k scratch doubles at $terms, then the row as in normalise, with the same total.
  (func (export "fromResiduals") (param $residuals i32) (param $m i32) (param $k i32) (param $constant i32) (param $curvature i32) (param $terms i32) (param $out i32) (param $rows i32) (param $total f64) (result f64)
    (local $i i32) (local $c i32) (local $rowBytes i32) (local $r f64) (local $at i32) (local $value f64)
    (local.set $rowBytes (i32.shl (local.get $k) (i32.const 3)))
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $i) (local.get $m)))
        (local.set $c (i32.const 0))
        (block $termsDone
          (loop $term
            (br_if $termsDone (i32.ge_u (local.get $c) (local.get $k)))
            (local.set $at (i32.shl (local.get $c) (i32.const 3)))
            (local.set $r (f64.load (i32.add (local.get $residuals) (local.get $at))))
            (f64.store (i32.add (local.get $terms) (local.get $at))
              (f64.add (f64.load (i32.add (local.get $constant) (local.get $at)))
                (f64.mul (f64.mul (f64.load (i32.add (local.get $curvature) (local.get $at))) (local.get $r)) (local.get $r))))
            (local.set $c (i32.add (local.get $c) (i32.const 1)))
            (br $term)))
        (local.set $value (call $row (local.get $terms) (local.get $k) (local.get $out)))
        (f64.store (local.get $rows) (local.get $value))
        (local.set $total (f64.add (local.get $total) (local.get $value)))
        (local.set $residuals (i32.add (local.get $residuals) (local.get $rowBytes)))
        (local.set $out (i32.add (local.get $out) (local.get $rowBytes)))
        (local.set $rows (i32.add (local.get $rows) (i32.const 8)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $next)))
    (local.get $total))

  ;; Adds the k columns of m rows (row-major at $values) to the k running sums at $sums, one
  ;; row after another.
  (func (export "columnSums") (param $values i32) (param $m i32) (param $k i32) (param $sums i32)
    (local $i i32) (local $c i32) (local $at i32)
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $i) (local.get $m)))
        (local.set $c (i32.const 0))
        (local.set $at (local.get $sums))
        (block $rowDone
          (loop $column
            (br_if $rowDone (i32.ge_u (local.get $c) (local.get $k)))
            (f64.store (local.get $at) (f64.add (f64.load (local.get $at)) (f64.load (local.get $values))))
            (local.set $at (i32.add (local.get $at) (i32.const 8)))
            (local.set $values (i32.add (local.get $values) (i32.const 8)))
            (local.set $c (i32.add (local.get $c) (i32.const 1)))
            (br $column)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $next))))

  ;; The subspace EM's E-step (warmStart/subspaceMixtureFit.ts) from squared residuals s
  ;; (row-major at $squares): the terms constant_c − (0.5 · s) / variance_c, then the row as
  ;; in normalise, the memberships to $out and the total returned.
  (func (export "fromSquares") (param $squares i32) (param $m i32) (param $k i32) (param $constant i32) (param $variance i32) (param $terms i32) (param $out i32) (param $total f64) (result f64)
    (local $i i32) (local $c i32) (local $rowBytes i32) (local $at i32)
    (local.set $rowBytes (i32.shl (local.get $k) (i32.const 3)))
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $i) (local.get $m)))
        (local.set $c (i32.const 0))
        (block $termsDone
          (loop $term
            (br_if $termsDone (i32.ge_u (local.get $c) (local.get $k)))
            (local.set $at (i32.shl (local.get $c) (i32.const 3)))
            (f64.store (i32.add (local.get $terms) (local.get $at))
              (f64.sub (f64.load (i32.add (local.get $constant) (local.get $at)))
                (f64.div (f64.mul (f64.const 0.5) (f64.load (i32.add (local.get $squares) (local.get $at))))
                  (f64.load (i32.add (local.get $variance) (local.get $at))))))
            (local.set $c (i32.add (local.get $c) (i32.const 1)))
            (br $term)))
        (local.set $total (f64.add (local.get $total) (call $row (local.get $terms) (local.get $k) (local.get $out))))
        (local.set $squares (i32.add (local.get $squares) (local.get $rowBytes)))
        (local.set $out (i32.add (local.get $out) (local.get $rowBytes)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $next)))
    (local.get $total))

  ;; Squared residuals of m rows of q values (row-major at $rows, responses at $y) under k
  ;; components (q coefficients each, one after another at $coefficients): each sum x·β from
  ;; 0 in column order, multiply then add, subtracted from y (rowResiduals' order), squared
  ;; into $squares (m x k), and τ · r² added to the k running sums at $rss, row by row (τ at
  ;; $tau, m x k).
  (func (export "squaredResiduals") (param $rows i32) (param $m i32) (param $q i32) (param $y i32) (param $coefficients i32) (param $k i32) (param $tau i32) (param $squares i32) (param $rss i32)
    (local $i i32) (local $c i32) (local $j i32) (local $s f64) (local $r f64) (local $beta i32) (local $x i32) (local $at i32)
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $i) (local.get $m)))
        (local.set $c (i32.const 0))
        (local.set $beta (local.get $coefficients))
        (block $componentsDone
          (loop $component
            (br_if $componentsDone (i32.ge_u (local.get $c) (local.get $k)))
            (local.set $s (f64.const 0))
            (local.set $x (local.get $rows))
            (local.set $j (i32.const 0))
            (block $sumDone
              (loop $sum
                (br_if $sumDone (i32.ge_u (local.get $j) (local.get $q)))
                (local.set $s (f64.add (local.get $s) (f64.mul (f64.load (local.get $x)) (f64.load (local.get $beta)))))
                (local.set $x (i32.add (local.get $x) (i32.const 8)))
                (local.set $beta (i32.add (local.get $beta) (i32.const 8)))
                (local.set $j (i32.add (local.get $j) (i32.const 1)))
                (br $sum)))
            (local.set $r (f64.sub (f64.load (local.get $y)) (local.get $s)))
            (local.set $r (f64.mul (local.get $r) (local.get $r)))
            (local.set $at (i32.shl (local.get $c) (i32.const 3)))
            (f64.store (i32.add (local.get $squares) (local.get $at)) (local.get $r))
            (f64.store (i32.add (local.get $rss) (local.get $at))
              (f64.add (f64.load (i32.add (local.get $rss) (local.get $at)))
                (f64.mul (f64.load (i32.add (local.get $tau) (local.get $at))) (local.get $r))))
            (local.set $c (i32.add (local.get $c) (i32.const 1)))
            (br $component)))
        (local.set $rows (i32.add (local.get $rows) (i32.shl (local.get $q) (i32.const 3))))
        (local.set $y (i32.add (local.get $y) (i32.const 8)))
        (local.set $tau (i32.add (local.get $tau) (i32.shl (local.get $k) (i32.const 3))))
        (local.set $squares (i32.add (local.get $squares) (i32.shl (local.get $k) (i32.const 3))))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $next))))

  ;; Σ_j (points[row·dim + j] − centre[j])², each difference squared and added in column order.
  (func $distance (param $point i32) (param $centre i32) (param $dim i32) (result f64)
    (local $j i32) (local $d f64) (local $total f64)
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $j) (local.get $dim)))
        (local.set $d (f64.sub (f64.load (local.get $point)) (f64.load (local.get $centre))))
        (local.set $total (f64.add (local.get $total) (f64.mul (local.get $d) (local.get $d))))
        (local.set $point (i32.add (local.get $point) (i32.const 8)))
        (local.set $centre (i32.add (local.get $centre) (i32.const 8)))
        (local.set $j (i32.add (local.get $j) (i32.const 1)))
        (br $next)))
    (local.get $total))

  ;; k-means++ seeding (starts.ts): each of n points' squared distance to its nearest centre
  ;; so far (at $nearest) lowered to the new centre's where that is smaller; returns their sum
  ;; in row order.
  (func (export "nearestUpdate") (param $points i32) (param $n i32) (param $dim i32) (param $centre i32) (param $nearest i32) (result f64)
    (local $i i32) (local $d f64) (local $total f64) (local $rowBytes i32)
    (local.set $rowBytes (i32.shl (local.get $dim) (i32.const 3)))
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $i) (local.get $n)))
        (local.set $d (call $distance (local.get $points) (local.get $centre) (local.get $dim)))
        (if (f64.lt (local.get $d) (f64.load (local.get $nearest)))
          (then (f64.store (local.get $nearest) (local.get $d))))
        (local.set $total (f64.add (local.get $total) (f64.load (local.get $nearest))))
        (local.set $points (i32.add (local.get $points) (local.get $rowBytes)))
        (local.set $nearest (i32.add (local.get $nearest) (i32.const 8)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $next)))
    (local.get $total))

  ;; The point drawn for the next centre: the first i at which target − Σ_{l ≤ i} nearest[l]
  ;; (subtracted one at a time) falls below 0, or n − 1.
  (func (export "draw") (param $nearest i32) (param $n i32) (param $target f64) (result i32)
    (local $i i32)
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $i) (local.get $n)))
        (local.set $target (f64.sub (local.get $target) (f64.load (local.get $nearest))))
        (if (f64.lt (local.get $target) (f64.const 0)) (then (return (local.get $i))))
        (local.set $nearest (i32.add (local.get $nearest) (i32.const 8)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $next)))
    (i32.sub (local.get $n) (i32.const 1)))

  ;; A Lloyd assignment: each point to its nearest of k centres (the first of equals), labels
  ;; as 32-bit integers at $labels; returns how many changed (all, when $first is set).
  (func (export "assignNearest") (param $points i32) (param $n i32) (param $dim i32) (param $centres i32) (param $k i32) (param $labels i32) (param $first i32) (result i32)
    (local $i i32) (local $c i32) (local $best i32) (local $d f64) (local $bestDistance f64) (local $moved i32) (local $rowBytes i32)
    (local.set $rowBytes (i32.shl (local.get $dim) (i32.const 3)))
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $i) (local.get $n)))
        (local.set $best (i32.const 0))
        (local.set $bestDistance (f64.const inf))
        (local.set $c (i32.const 0))
        (block $centresDone
          (loop $centre
            (br_if $centresDone (i32.ge_u (local.get $c) (local.get $k)))
            (local.set $d (call $distance (local.get $points) (i32.add (local.get $centres) (i32.mul (local.get $c) (local.get $rowBytes))) (local.get $dim)))
            (if (f64.lt (local.get $d) (local.get $bestDistance))
              (then
                (local.set $bestDistance (local.get $d))
                (local.set $best (local.get $c))))
            (local.set $c (i32.add (local.get $c) (i32.const 1)))
            (br $centre)))
        (if (i32.or (local.get $first) (i32.ne (i32.load (local.get $labels)) (local.get $best)))
          (then (local.set $moved (i32.add (local.get $moved) (i32.const 1)))))
        (i32.store (local.get $labels) (local.get $best))
        (local.set $points (i32.add (local.get $points) (local.get $rowBytes)))
        (local.set $labels (i32.add (local.get $labels) (i32.const 4)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $next)))
    (local.get $moved))

  ;; Per centre the count (as a double) and the sums of its points' coordinates, in row order,
  ;; into $counts (k) and $sums (k x dim), both set afresh.
  (func (export "centreSums") (param $points i32) (param $n i32) (param $dim i32) (param $labels i32) (param $k i32) (param $sums i32) (param $counts i32)
    (local $i i32) (local $j i32) (local $at i32) (local $to i32) (local $rowBytes i32)
    (local.set $rowBytes (i32.shl (local.get $dim) (i32.const 3)))
    (memory.fill (local.get $sums) (i32.const 0) (i32.mul (local.get $k) (local.get $rowBytes)))
    (memory.fill (local.get $counts) (i32.const 0) (i32.shl (local.get $k) (i32.const 3)))
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $i) (local.get $n)))
        (local.set $at (i32.shl (i32.load (local.get $labels)) (i32.const 3)))
        (f64.store (i32.add (local.get $counts) (local.get $at)) (f64.add (f64.load (i32.add (local.get $counts) (local.get $at))) (f64.const 1)))
        (local.set $to (i32.add (local.get $sums) (i32.mul (i32.load (local.get $labels)) (local.get $rowBytes))))
        (local.set $j (i32.const 0))
        (block $rowDone
          (loop $coordinate
            (br_if $rowDone (i32.ge_u (local.get $j) (local.get $dim)))
            (f64.store (local.get $to) (f64.add (f64.load (local.get $to)) (f64.load (local.get $points))))
            (local.set $to (i32.add (local.get $to) (i32.const 8)))
            (local.set $points (i32.add (local.get $points) (i32.const 8)))
            (local.set $j (i32.add (local.get $j) (i32.const 1)))
            (br $coordinate)))
        (local.set $labels (i32.add (local.get $labels) (i32.const 4)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $next))))

  ;; Hard assignment (warmStart/alternatingLeastSquares.ts): each of n rows to the component
  ;; with the smallest |y − fitted| (fitted n x k at $fitted), or with $classify set to the
  ;; smallest ½ (|y − fitted| · inverseScale_c)² + penalty_c (k each at $inverseScale and
  ;; $penalty), the first of equals. Labels (32-bit) at $labels, the row's |residual| under
  ;; its label at $best; each component a row left or joined gets 1 at $changed (one byte each,
  ;; a label below 0 leaving none). Returns how many labels changed.
  (func (export "assignRows") (param $fitted i32) (param $y i32) (param $n i32) (param $k i32) (param $classify i32) (param $inverseScale i32) (param $penalty i32) (param $labels i32) (param $best i32) (param $changed i32) (result i32)
    (local $i i32) (local $c i32) (local $label i32) (local $old i32) (local $count i32)
    (local $r f64) (local $smallest f64) (local $lowest f64) (local $scaled f64) (local $value f64) (local $yi f64) (local $at i32)
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $i) (local.get $n)))
        (local.set $label (i32.const 0))
        (local.set $smallest (f64.const inf))
        (local.set $lowest (f64.const inf))
        (local.set $yi (f64.load (local.get $y)))
        (local.set $c (i32.const 0))
        (block $componentsDone
          (loop $component
            (br_if $componentsDone (i32.ge_u (local.get $c) (local.get $k)))
            (local.set $at (i32.shl (local.get $c) (i32.const 3)))
            (local.set $r (f64.abs (f64.sub (local.get $yi) (f64.load (i32.add (local.get $fitted) (local.get $at))))))
            (if (local.get $classify)
              (then
                (local.set $scaled (f64.mul (local.get $r) (f64.load (i32.add (local.get $inverseScale) (local.get $at)))))
                (local.set $value (f64.add (f64.mul (f64.mul (f64.const 0.5) (local.get $scaled)) (local.get $scaled)) (f64.load (i32.add (local.get $penalty) (local.get $at)))))
                (if (f64.lt (local.get $value) (local.get $lowest))
                  (then
                    (local.set $lowest (local.get $value))
                    (local.set $smallest (local.get $r))
                    (local.set $label (local.get $c)))))
              (else
                (if (f64.lt (local.get $r) (local.get $smallest))
                  (then
                    (local.set $smallest (local.get $r))
                    (local.set $label (local.get $c))))))
            (local.set $c (i32.add (local.get $c) (i32.const 1)))
            (br $component)))
        (local.set $old (i32.load (local.get $labels)))
        (if (i32.ne (local.get $old) (local.get $label))
          (then
            (local.set $count (i32.add (local.get $count) (i32.const 1)))
            (if (i32.ge_s (local.get $old) (i32.const 0))
              (then (i32.store8 (i32.add (local.get $changed) (local.get $old)) (i32.const 1))))
            (i32.store8 (i32.add (local.get $changed) (local.get $label)) (i32.const 1))))
        (i32.store (local.get $labels) (local.get $label))
        (f64.store (local.get $best) (local.get $smallest))
        (local.set $fitted (i32.add (local.get $fitted) (i32.shl (local.get $k) (i32.const 3))))
        (local.set $y (i32.add (local.get $y) (i32.const 8)))
        (local.set $labels (i32.add (local.get $labels) (i32.const 4)))
        (local.set $best (i32.add (local.get $best) (i32.const 8)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $next)))
    (local.get $count))


  ;; Products of m rows of q values (row-major at $rows) with k vectors of q (one after
  ;; another at $vectors): out[i·k + c] = Σ_j x_ij v_cj, each from 0 in column order, multiply
  ;; then add (the warm start's projection onto its subspace).
  (func (export "rowProducts") (param $rows i32) (param $m i32) (param $q i32) (param $vectors i32) (param $k i32) (param $out i32)
    (local $i i32) (local $c i32) (local $j i32) (local $s f64) (local $x i32) (local $v i32)
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $i) (local.get $m)))
        (local.set $c (i32.const 0))
        (local.set $v (local.get $vectors))
        (block $vectorsDone
          (loop $vector
            (br_if $vectorsDone (i32.ge_u (local.get $c) (local.get $k)))
            (local.set $s (f64.const 0))
            (local.set $x (local.get $rows))
            (local.set $j (i32.const 0))
            (block $sumDone
              (loop $sum
                (br_if $sumDone (i32.ge_u (local.get $j) (local.get $q)))
                (local.set $s (f64.add (local.get $s) (f64.mul (f64.load (local.get $x)) (f64.load (local.get $v)))))
                (local.set $x (i32.add (local.get $x) (i32.const 8)))
                (local.set $v (i32.add (local.get $v) (i32.const 8)))
                (local.set $j (i32.add (local.get $j) (i32.const 1)))
                (br $sum)))
            (f64.store (local.get $out) (local.get $s))
            (local.set $out (i32.add (local.get $out) (i32.const 8)))
            (local.set $c (i32.add (local.get $c) (i32.const 1)))
            (br $vector)))
        (local.set $rows (i32.add (local.get $rows) (i32.shl (local.get $q) (i32.const 3))))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $next))))

  ;; Whitening (warmStart/whitenPredictors.ts), m rows of p values in place at $rows: each
  ;; value less its column's mean, then x̃ = L⁻¹x by forward substitution with the lower
  ;; factor L (p x p row-major at $lower): x̃_a = (x_a − Σ_{l<a} L_al x̃_l) / L_aa, each sum in
  ;; dot's association (four running sums over l in steps of four, the rest added to the
  ;; first, then (s0 + s1) + (s2 + s3); weightedGram.ts).
  (func (export "whitenRows") (param $rows i32) (param $m i32) (param $p i32) (param $mean i32) (param $lower i32)
    (local $i i32) (local $a i32) (local $l i32) (local $row i32) (local $factor i32)
    (local $s0 f64) (local $s1 f64) (local $s2 f64) (local $s3 f64) (local $rowBytes i32)
    (local.set $rowBytes (i32.shl (local.get $p) (i32.const 3)))
    (local.set $row (local.get $rows))
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $i) (local.get $m)))
        (local.set $a (i32.const 0))
        (block $centred
          (loop $centre
            (br_if $centred (i32.ge_u (local.get $a) (local.get $p)))
            (f64.store (i32.add (local.get $row) (i32.shl (local.get $a) (i32.const 3)))
              (f64.sub (f64.load (i32.add (local.get $row) (i32.shl (local.get $a) (i32.const 3))))
                (f64.load (i32.add (local.get $mean) (i32.shl (local.get $a) (i32.const 3))))))
            (local.set $a (i32.add (local.get $a) (i32.const 1)))
            (br $centre)))
        (local.set $a (i32.const 0))
        (block $solved
          (loop $solve
            (br_if $solved (i32.ge_u (local.get $a) (local.get $p)))
            (local.set $factor (i32.add (local.get $lower) (i32.mul (local.get $a) (local.get $rowBytes))))
            (local.set $s0 (f64.const 0))
            (local.set $s1 (f64.const 0))
            (local.set $s2 (f64.const 0))
            (local.set $s3 (f64.const 0))
            (local.set $l (i32.const 0))
            (block $quadsDone
              (loop $quads
                (br_if $quadsDone (i32.ge_u (i32.add (local.get $l) (i32.const 3)) (local.get $a)))
                (local.set $s0 (f64.add (local.get $s0) (f64.mul
                  (f64.load (i32.add (local.get $factor) (i32.shl (local.get $l) (i32.const 3))))
                  (f64.load (i32.add (local.get $row) (i32.shl (local.get $l) (i32.const 3)))))))
                (local.set $s1 (f64.add (local.get $s1) (f64.mul
                  (f64.load offset=8 (i32.add (local.get $factor) (i32.shl (local.get $l) (i32.const 3))))
                  (f64.load offset=8 (i32.add (local.get $row) (i32.shl (local.get $l) (i32.const 3)))))))
                (local.set $s2 (f64.add (local.get $s2) (f64.mul
                  (f64.load offset=16 (i32.add (local.get $factor) (i32.shl (local.get $l) (i32.const 3))))
                  (f64.load offset=16 (i32.add (local.get $row) (i32.shl (local.get $l) (i32.const 3)))))))
                (local.set $s3 (f64.add (local.get $s3) (f64.mul
                  (f64.load offset=24 (i32.add (local.get $factor) (i32.shl (local.get $l) (i32.const 3))))
                  (f64.load offset=24 (i32.add (local.get $row) (i32.shl (local.get $l) (i32.const 3)))))))
                (local.set $l (i32.add (local.get $l) (i32.const 4)))
                (br $quads)))
            (block $restDone
              (loop $rest
                (br_if $restDone (i32.ge_u (local.get $l) (local.get $a)))
                (local.set $s0 (f64.add (local.get $s0) (f64.mul
                  (f64.load (i32.add (local.get $factor) (i32.shl (local.get $l) (i32.const 3))))
                  (f64.load (i32.add (local.get $row) (i32.shl (local.get $l) (i32.const 3)))))))
                (local.set $l (i32.add (local.get $l) (i32.const 1)))
                (br $rest)))
            (f64.store (i32.add (local.get $row) (i32.shl (local.get $a) (i32.const 3)))
              (f64.div
                (f64.sub (f64.load (i32.add (local.get $row) (i32.shl (local.get $a) (i32.const 3))))
                  (f64.add (f64.add (local.get $s0) (local.get $s1)) (f64.add (local.get $s2) (local.get $s3))))
                (f64.load (i32.add (local.get $factor) (i32.shl (local.get $a) (i32.const 3))))))
            (local.set $a (i32.add (local.get $a) (i32.const 1)))
            (br $solve)))
        (local.set $row (i32.add (local.get $row) (local.get $rowBytes)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $next))))
)
