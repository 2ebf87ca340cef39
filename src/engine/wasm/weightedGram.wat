;; The 128-bit SIMD path of the weighted-Gram kernel (weightedGram.ts) with the M-step's
;; choice of each component's rows (holdRows) and the subspace EM's weights (cutMemberships),
;; of the E-step's
;; residuals (mixture/eStep.ts), of the hard-assignment predictions (rowPredictions in
;; weightedGram.ts) and of the Cholesky factorisation (cholesky.ts). Assembled by
;; scripts/buildWasm.mjs into weightedGramModule.ts; a test checks the two agree.
;;
;; Every entry is one running sum over the rows in order, two entries to a 128-bit lane pair,
;; multiply then add (never fused): each sum is the same, to the bit, as the scalar kernel's.
;; Pointers are byte offsets into the exported memory; counts are in doubles.
(module
  (memory (export "memory") 1)

  ;; out[(l + u)·qp + j + t] = Σ_i w[i·qp + j + t] · x[i·qp + l + u] over i < m, for j < rows in
  ;; steps of 4 (rows a multiple of 4), l from j to qp in steps of 4, t and u in 0..3: a 4 x 4
  ;; block of entries in eight lane pairs per pass over the rows. w and x are row-major m x qp.
  ;; With $add set, each sum is added to what out held (out + s, one rounding, as the
  ;; JavaScript's gram += s), so out can carry a Gram over many blocks.
  (func (export "gram") (param $w i32) (param $xs i32) (param $m i32) (param $rows i32) (param $qp i32) (param $out i32) (param $add i32)
    (local $j i32) (local $l i32) (local $rowBytes i32) (local $pw i32) (local $px i32) (local $end i32) (local $po i32)
    (local $w01 v128) (local $w23 v128) (local $x v128)
    (local $s00 v128) (local $s10 v128) (local $s01 v128) (local $s11 v128)
    (local $s02 v128) (local $s12 v128) (local $s03 v128) (local $s13 v128)
    (local.set $rowBytes (i32.shl (local.get $qp) (i32.const 3)))
    (local.set $j (i32.const 0))
    (block $blockRowsDone
      (loop $blockRows
        (br_if $blockRowsDone (i32.ge_u (local.get $j) (local.get $rows)))
        (local.set $l (local.get $j))
        (block $blockColumnsDone
          (loop $blockColumns
            (br_if $blockColumnsDone (i32.ge_u (local.get $l) (local.get $qp)))
            (local.set $s00 (v128.const i64x2 0 0))
            (local.set $s10 (v128.const i64x2 0 0))
            (local.set $s01 (v128.const i64x2 0 0))
            (local.set $s11 (v128.const i64x2 0 0))
            (local.set $s02 (v128.const i64x2 0 0))
            (local.set $s12 (v128.const i64x2 0 0))
            (local.set $s03 (v128.const i64x2 0 0))
            (local.set $s13 (v128.const i64x2 0 0))
            (local.set $pw (i32.add (local.get $w) (i32.shl (local.get $j) (i32.const 3))))
            (local.set $px (i32.add (local.get $xs) (i32.shl (local.get $l) (i32.const 3))))
            (local.set $end (i32.add (local.get $pw) (i32.mul (local.get $m) (local.get $rowBytes))))
            (block $sumDone
              (br_if $sumDone (i32.ge_u (local.get $pw) (local.get $end)))
              (loop $sum
                (local.set $w01 (v128.load (local.get $pw)))
                (local.set $w23 (v128.load offset=16 (local.get $pw)))
                (local.set $x (v128.load64_splat offset=0 (local.get $px)))
                (local.set $s00 (f64x2.add (local.get $s00) (f64x2.mul (local.get $w01) (local.get $x))))
                (local.set $s10 (f64x2.add (local.get $s10) (f64x2.mul (local.get $w23) (local.get $x))))
                (local.set $x (v128.load64_splat offset=8 (local.get $px)))
                (local.set $s01 (f64x2.add (local.get $s01) (f64x2.mul (local.get $w01) (local.get $x))))
                (local.set $s11 (f64x2.add (local.get $s11) (f64x2.mul (local.get $w23) (local.get $x))))
                (local.set $x (v128.load64_splat offset=16 (local.get $px)))
                (local.set $s02 (f64x2.add (local.get $s02) (f64x2.mul (local.get $w01) (local.get $x))))
                (local.set $s12 (f64x2.add (local.get $s12) (f64x2.mul (local.get $w23) (local.get $x))))
                (local.set $x (v128.load64_splat offset=24 (local.get $px)))
                (local.set $s03 (f64x2.add (local.get $s03) (f64x2.mul (local.get $w01) (local.get $x))))
                (local.set $s13 (f64x2.add (local.get $s13) (f64x2.mul (local.get $w23) (local.get $x))))
                (local.set $pw (i32.add (local.get $pw) (local.get $rowBytes)))
                (local.set $px (i32.add (local.get $px) (local.get $rowBytes)))
                (br_if $sum (i32.lt_u (local.get $pw) (local.get $end)))))
            (local.set $po (i32.add (local.get $out) (i32.shl (i32.add (i32.mul (i32.add (local.get $l) (i32.const 0)) (local.get $qp)) (local.get $j)) (i32.const 3))))
            (if (local.get $add)
              (then
                (local.set $s00 (f64x2.add (v128.load (local.get $po)) (local.get $s00)))
                (local.set $s10 (f64x2.add (v128.load offset=16 (local.get $po)) (local.get $s10)))))
            (v128.store (local.get $po) (local.get $s00))
            (v128.store offset=16 (local.get $po) (local.get $s10))
            (local.set $po (i32.add (local.get $out) (i32.shl (i32.add (i32.mul (i32.add (local.get $l) (i32.const 1)) (local.get $qp)) (local.get $j)) (i32.const 3))))
            (if (local.get $add)
              (then
                (local.set $s01 (f64x2.add (v128.load (local.get $po)) (local.get $s01)))
                (local.set $s11 (f64x2.add (v128.load offset=16 (local.get $po)) (local.get $s11)))))
            (v128.store (local.get $po) (local.get $s01))
            (v128.store offset=16 (local.get $po) (local.get $s11))
            (local.set $po (i32.add (local.get $out) (i32.shl (i32.add (i32.mul (i32.add (local.get $l) (i32.const 2)) (local.get $qp)) (local.get $j)) (i32.const 3))))
            (if (local.get $add)
              (then
                (local.set $s02 (f64x2.add (v128.load (local.get $po)) (local.get $s02)))
                (local.set $s12 (f64x2.add (v128.load offset=16 (local.get $po)) (local.get $s12)))))
            (v128.store (local.get $po) (local.get $s02))
            (v128.store offset=16 (local.get $po) (local.get $s12))
            (local.set $po (i32.add (local.get $out) (i32.shl (i32.add (i32.mul (i32.add (local.get $l) (i32.const 3)) (local.get $qp)) (local.get $j)) (i32.const 3))))
            (if (local.get $add)
              (then
                (local.set $s03 (f64x2.add (v128.load (local.get $po)) (local.get $s03)))
                (local.set $s13 (f64x2.add (v128.load offset=16 (local.get $po)) (local.get $s13)))))
            (v128.store (local.get $po) (local.get $s03))
            (v128.store offset=16 (local.get $po) (local.get $s13))
            (local.set $l (i32.add (local.get $l) (i32.const 4)))
            (br $blockColumns)))
        (local.set $j (i32.add (local.get $j) (i32.const 4)))
        (br $blockRows))))

  ;; Dot products in dot's association (weightedGram.ts): for column pairs j, j + 1 from `from`
  ;; (even) to qp, out[j] = Σ_g x[g·qp + j] · v[g] over g < m, with row g in partial sum g mod 4
  ;; while 4 rows remain and the last m mod 4 rows in sum 0, then (s0 + s1) + (s2 + s3).
  ;; v[g] is at byte v + g·vStride, so v may be a column of a row-major block.
  (func (export "dots") (param $x i32) (param $m i32) (param $qp i32) (param $from i32) (param $v i32) (param $vStride i32) (param $out i32)
    (local $j i32) (local $g i32) (local $head i32) (local $rowBytes i32) (local $px i32) (local $pv i32)
    (local $s0 v128) (local $s1 v128) (local $s2 v128) (local $s3 v128)
    (local.set $rowBytes (i32.shl (local.get $qp) (i32.const 3)))
    (local.set $head (i32.and (local.get $m) (i32.const -4)))
    (local.set $j (local.get $from))
    (block $columnsDone
      (loop $columns
        (br_if $columnsDone (i32.ge_u (local.get $j) (local.get $qp)))
        (local.set $s0 (v128.const i64x2 0 0))
        (local.set $s1 (v128.const i64x2 0 0))
        (local.set $s2 (v128.const i64x2 0 0))
        (local.set $s3 (v128.const i64x2 0 0))
        (local.set $px (i32.add (local.get $x) (i32.shl (local.get $j) (i32.const 3))))
        (local.set $pv (local.get $v))
        (local.set $g (i32.const 0))
        (block $fourDone
          (loop $four
            (br_if $fourDone (i32.ge_u (local.get $g) (local.get $head)))
            (local.set $s0 (f64x2.add (local.get $s0) (f64x2.mul (v128.load (local.get $px)) (v128.load64_splat (local.get $pv)))))
            (local.set $px (i32.add (local.get $px) (local.get $rowBytes)))
            (local.set $pv (i32.add (local.get $pv) (local.get $vStride)))
            (local.set $s1 (f64x2.add (local.get $s1) (f64x2.mul (v128.load (local.get $px)) (v128.load64_splat (local.get $pv)))))
            (local.set $px (i32.add (local.get $px) (local.get $rowBytes)))
            (local.set $pv (i32.add (local.get $pv) (local.get $vStride)))
            (local.set $s2 (f64x2.add (local.get $s2) (f64x2.mul (v128.load (local.get $px)) (v128.load64_splat (local.get $pv)))))
            (local.set $px (i32.add (local.get $px) (local.get $rowBytes)))
            (local.set $pv (i32.add (local.get $pv) (local.get $vStride)))
            (local.set $s3 (f64x2.add (local.get $s3) (f64x2.mul (v128.load (local.get $px)) (v128.load64_splat (local.get $pv)))))
            (local.set $px (i32.add (local.get $px) (local.get $rowBytes)))
            (local.set $pv (i32.add (local.get $pv) (local.get $vStride)))
            (local.set $g (i32.add (local.get $g) (i32.const 4)))
            (br $four)))
        (block $restDone
          (loop $rest
            (br_if $restDone (i32.ge_u (local.get $g) (local.get $m)))
            (local.set $s0 (f64x2.add (local.get $s0) (f64x2.mul (v128.load (local.get $px)) (v128.load64_splat (local.get $pv)))))
            (local.set $px (i32.add (local.get $px) (local.get $rowBytes)))
            (local.set $pv (i32.add (local.get $pv) (local.get $vStride)))
            (local.set $g (i32.add (local.get $g) (i32.const 1)))
            (br $rest)))
        (v128.store (i32.add (local.get $out) (i32.shl (local.get $j) (i32.const 3)))
          (f64x2.add (f64x2.add (local.get $s0) (local.get $s1)) (f64x2.add (local.get $s2) (local.get $s3))))
        (local.set $j (i32.add (local.get $j) (i32.const 2)))
        (br $columns))))

  ;; out[g·qp + j] = v[g] · x[g·qp + j] for g < m, j < qp (qp even): a row block's weighted
  ;; rows from its plain ones, one product per value as in JavaScript. v[g] is at byte
  ;; v + g·vStride.
  (func (export "scale") (param $x i32) (param $m i32) (param $qp i32) (param $v i32) (param $vStride i32) (param $out i32)
    (local $g i32) (local $j i32) (local $w v128)
    (local.set $g (i32.const 0))
    (block $rowsDone
      (loop $rows
        (br_if $rowsDone (i32.ge_u (local.get $g) (local.get $m)))
        (local.set $w (v128.load64_splat (local.get $v)))
        (local.set $j (i32.const 0))
        (block $valuesDone
          (loop $values
            (br_if $valuesDone (i32.ge_u (local.get $j) (local.get $qp)))
            (v128.store (local.get $out) (f64x2.mul (v128.load (local.get $x)) (local.get $w)))
            (local.set $x (i32.add (local.get $x) (i32.const 16)))
            (local.set $out (i32.add (local.get $out) (i32.const 16)))
            (local.set $j (i32.add (local.get $j) (i32.const 2)))
            (br $values)))
        (local.set $v (i32.add (local.get $v) (local.get $vStride)))
        (local.set $g (i32.add (local.get $g) (i32.const 1)))
        (br $rows))))

  ;; Row g < m of out (qp doubles a row) from staged row indices[g] (32-bit integers; stride
  ;; doubles a row): `ones` 1s, the staged row's first q − ones values, then zeros up to qp.
  (func (export "gather") (param $staged i32) (param $stride i32) (param $ones i32) (param $q i32) (param $qp i32) (param $indices i32) (param $m i32) (param $out i32)
    (local $g i32) (local $j i32) (local $from i32) (local $copy i32)
    (local.set $copy (i32.sub (local.get $q) (local.get $ones)))
    (local.set $g (i32.const 0))
    (block $rowsDone
      (loop $rows
        (br_if $rowsDone (i32.ge_u (local.get $g) (local.get $m)))
        (local.set $from (i32.add (local.get $staged)
          (i32.shl (i32.mul (i32.load (i32.add (local.get $indices) (i32.shl (local.get $g) (i32.const 2)))) (local.get $stride)) (i32.const 3))))
        (local.set $j (i32.const 0))
        (block $onesDone
          (loop $onesLoop
            (br_if $onesDone (i32.ge_u (local.get $j) (local.get $ones)))
            (f64.store (local.get $out) (f64.const 1))
            (local.set $out (i32.add (local.get $out) (i32.const 8)))
            (local.set $j (i32.add (local.get $j) (i32.const 1)))
            (br $onesLoop)))
        (local.set $j (i32.const 0))
        (block $pairsDone
          (loop $pairs
            (br_if $pairsDone (i32.ge_u (i32.add (local.get $j) (i32.const 1)) (local.get $copy)))
            (v128.store (local.get $out) (v128.load (local.get $from)))
            (local.set $out (i32.add (local.get $out) (i32.const 16)))
            (local.set $from (i32.add (local.get $from) (i32.const 16)))
            (local.set $j (i32.add (local.get $j) (i32.const 2)))
            (br $pairs)))
        (if (i32.lt_u (local.get $j) (local.get $copy))
          (then
            (f64.store (local.get $out) (f64.load (local.get $from)))
            (local.set $out (i32.add (local.get $out) (i32.const 8)))))
        (local.set $j (local.get $q))
        (block $zerosDone
          (loop $zeros
            (br_if $zerosDone (i32.ge_u (local.get $j) (local.get $qp)))
            (f64.store (local.get $out) (f64.const 0))
            (local.set $out (i32.add (local.get $out) (i32.const 8)))
            (local.set $j (i32.add (local.get $j) (i32.const 1)))
            (br $zeros)))
        (local.set $g (i32.add (local.get $g) (i32.const 1)))
        (br $rows))))

;; The rows component c holds among m staged rows (holdRows in weightedGram.ts): w the
  ;; membership at tau + (i·k + c)·8, y[i] the response. Each row with w not below $threshold
  ;; (a NaN membership is not below it), in order, gets indices[g] = i (32-bit), vectors[2g] = y,
  ;; vectors[2g + 1] = w, and w·y·y is added to the double at $squares, one running sum in row
  ;; order. Returns g, the rows held.
  (func (export "hold") (param $tau i32) (param $k i32) (param $c i32) (param $y i32) (param $m i32) (param $threshold f64) (param $indices i32) (param $vectors i32) (param $squares i32) (result i32)
    (local $i i32) (local $g i32) (local $w f64) (local $value f64) (local $sum f64) (local $at i32) (local $stride i32)
    (local.set $sum (f64.load (local.get $squares)))
    (local.set $stride (i32.shl (local.get $k) (i32.const 3)))
    (local.set $at (i32.add (local.get $tau) (i32.shl (local.get $c) (i32.const 3))))
    (block $rowsDone
      (loop $rows
        (br_if $rowsDone (i32.ge_u (local.get $i) (local.get $m)))
        (local.set $w (f64.load (local.get $at)))
        (if (i32.eqz (f64.lt (local.get $w) (local.get $threshold)))
          (then
            (local.set $value (f64.load (i32.add (local.get $y) (i32.shl (local.get $i) (i32.const 3)))))
            (i32.store (i32.add (local.get $indices) (i32.shl (local.get $g) (i32.const 2))) (local.get $i))
            (f64.store (i32.add (local.get $vectors) (i32.shl (local.get $g) (i32.const 4))) (local.get $value))
            (f64.store offset=8 (i32.add (local.get $vectors) (i32.shl (local.get $g) (i32.const 4))) (local.get $w))
            (local.set $sum (f64.add (local.get $sum) (f64.mul (f64.mul (local.get $w) (local.get $value)) (local.get $value))))
            (local.set $g (i32.add (local.get $g) (i32.const 1)))))
        (local.set $at (i32.add (local.get $at) (local.get $stride)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $rows)))
    (f64.store (local.get $squares) (local.get $sum))
    (local.get $g))

;; Per-row weights of component c from staged memberships (cutMemberships in
  ;; weightedGram.ts): for i < m, τ = tau[(i·k + c)·8], 0 where τ is below $cutoff (a NaN is
  ;; not below it), stored at vectors + i·stride; returns their sum from 0 in row order.
  (func (export "cut") (param $tau i32) (param $k i32) (param $c i32) (param $m i32) (param $cutoff f64) (param $vectors i32) (param $stride i32) (result f64)
    (local $i i32) (local $t f64) (local $mass f64) (local $at i32) (local $rowBytes i32)
    (local.set $rowBytes (i32.shl (local.get $k) (i32.const 3)))
    (local.set $at (i32.add (local.get $tau) (i32.shl (local.get $c) (i32.const 3))))
    (block $rowsDone
      (loop $rows
        (br_if $rowsDone (i32.ge_u (local.get $i) (local.get $m)))
        (local.set $t (f64.load (local.get $at)))
        (if (f64.lt (local.get $t) (local.get $cutoff)) (then (local.set $t (f64.const 0))))
        (f64.store (local.get $vectors) (local.get $t))
        (local.set $mass (f64.add (local.get $mass) (local.get $t)))
        (local.set $at (i32.add (local.get $at) (local.get $rowBytes)))
        (local.set $vectors (i32.add (local.get $vectors) (local.get $stride)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $rows)))
    (local.get $mass))

  ;; Residuals y − xᵀβ of m staged rows (stride doubles a row, after `ones` implicit 1s) under
  ;; k components, two components to a lane pair: out[g·k + c] for g < m, c < k. The
  ;; coefficients are interleaved by pairs: β_{2p, j} and β_{2p+1, j} at coefficients +
  ;; (p·q + j)·16 (a zero component pads an odd k). Each sum starts at 0, adds the implicit
  ;; 1s' coefficients, then x_j·β_j for j in order, multiply then add: the JavaScript
  ;; rowResiduals' sums to the bit.
  (func (export "residuals") (param $staged i32) (param $stride i32) (param $ones i32) (param $q i32) (param $coefficients i32) (param $y i32) (param $m i32) (param $k i32) (param $out i32)
    (local $g i32) (local $p i32) (local $j i32) (local $row i32) (local $pc i32) (local $po i32) (local $s v128) (local $r v128)
    (local.set $g (i32.const 0))
    (block $rowsDone
      (loop $rows
        (br_if $rowsDone (i32.ge_u (local.get $g) (local.get $m)))
        (local.set $pc (local.get $coefficients))
        (local.set $po (i32.add (local.get $out) (i32.shl (i32.mul (local.get $g) (local.get $k)) (i32.const 3))))
        (local.set $p (i32.const 0))
        (block $pairsDone
          (loop $pairs
            (br_if $pairsDone (i32.ge_u (local.get $p) (local.get $k)))
            (local.set $s (v128.const i64x2 0 0))
            (local.set $j (i32.const 0))
            (block $onesDone
              (loop $onesLoop
                (br_if $onesDone (i32.ge_u (local.get $j) (local.get $ones)))
                (local.set $s (f64x2.add (local.get $s) (v128.load (local.get $pc))))
                (local.set $pc (i32.add (local.get $pc) (i32.const 16)))
                (local.set $j (i32.add (local.get $j) (i32.const 1)))
                (br $onesLoop)))
            (local.set $row (i32.add (local.get $staged) (i32.shl (i32.mul (local.get $g) (local.get $stride)) (i32.const 3))))
            (block $valuesDone
              (loop $values
                (br_if $valuesDone (i32.ge_u (local.get $j) (local.get $q)))
                (local.set $s (f64x2.add (local.get $s) (f64x2.mul (v128.load64_splat (local.get $row)) (v128.load (local.get $pc)))))
                (local.set $row (i32.add (local.get $row) (i32.const 8)))
                (local.set $pc (i32.add (local.get $pc) (i32.const 16)))
                (local.set $j (i32.add (local.get $j) (i32.const 1)))
                (br $values)))
            (local.set $r (f64x2.sub (v128.load64_splat (i32.add (local.get $y) (i32.shl (local.get $g) (i32.const 3)))) (local.get $s)))
            (f64.store (local.get $po) (f64x2.extract_lane 0 (local.get $r)))
            (if (i32.lt_u (i32.add (local.get $p) (i32.const 1)) (local.get $k))
              (then (f64.store offset=8 (local.get $po) (f64x2.extract_lane 1 (local.get $r)))))
            (local.set $po (i32.add (local.get $po) (i32.const 16)))
            (local.set $p (i32.add (local.get $p) (i32.const 2)))
            (br $pairs)))
        (local.set $g (i32.add (local.get $g) (i32.const 1)))
        (br $rows))))

  ;; Predictions xᵀβ of m rows (row-major, q doubles a row) under 2·pairs components, two
  ;; components to a lane pair: out[g·2·pairs + c]. The coefficients are interleaved by pairs as
  ;; for "residuals". Each sum runs in the order of weightedGram.ts's dot: four running sums
  ;; over j ≡ 0, 1, 2, 3 (mod 4) up to the last multiple of 4, the rest of j added to the first,
  ;; then (s0 + s1) + (s2 + s3); multiply then add: dot's value to the bit.
  (func (export "predictions") (param $rows i32) (param $q i32) (param $coefficients i32) (param $m i32) (param $pairs i32) (param $out i32)
    (local $g i32) (local $p i32) (local $j i32) (local $head i32) (local $row i32) (local $px i32) (local $pc i32) (local $po i32)
    (local $s0 v128) (local $s1 v128) (local $s2 v128) (local $s3 v128)
    (local.set $head (i32.and (local.get $q) (i32.const -4)))
    (local.set $po (local.get $out))
    (local.set $g (i32.const 0))
    (block $rowsDone
      (loop $rowsLoop
        (br_if $rowsDone (i32.ge_u (local.get $g) (local.get $m)))
        (local.set $row (i32.add (local.get $rows) (i32.shl (i32.mul (local.get $g) (local.get $q)) (i32.const 3))))
        (local.set $pc (local.get $coefficients))
        (local.set $p (i32.const 0))
        (block $pairsDone
          (loop $pairsLoop
            (br_if $pairsDone (i32.ge_u (local.get $p) (local.get $pairs)))
            (local.set $s0 (v128.const i64x2 0 0))
            (local.set $s1 (v128.const i64x2 0 0))
            (local.set $s2 (v128.const i64x2 0 0))
            (local.set $s3 (v128.const i64x2 0 0))
            (local.set $px (local.get $row))
            (local.set $j (i32.const 0))
            (block $fourDone
              (loop $four
                (br_if $fourDone (i32.ge_u (local.get $j) (local.get $head)))
                (local.set $s0 (f64x2.add (local.get $s0) (f64x2.mul (v128.load64_splat (local.get $px)) (v128.load (local.get $pc)))))
                (local.set $s1 (f64x2.add (local.get $s1) (f64x2.mul (v128.load64_splat offset=8 (local.get $px)) (v128.load offset=16 (local.get $pc)))))
                (local.set $s2 (f64x2.add (local.get $s2) (f64x2.mul (v128.load64_splat offset=16 (local.get $px)) (v128.load offset=32 (local.get $pc)))))
                (local.set $s3 (f64x2.add (local.get $s3) (f64x2.mul (v128.load64_splat offset=24 (local.get $px)) (v128.load offset=48 (local.get $pc)))))
                (local.set $px (i32.add (local.get $px) (i32.const 32)))
                (local.set $pc (i32.add (local.get $pc) (i32.const 64)))
                (local.set $j (i32.add (local.get $j) (i32.const 4)))
                (br $four)))
            (block $restDone
              (loop $rest
                (br_if $restDone (i32.ge_u (local.get $j) (local.get $q)))
                (local.set $s0 (f64x2.add (local.get $s0) (f64x2.mul (v128.load64_splat (local.get $px)) (v128.load (local.get $pc)))))
                (local.set $px (i32.add (local.get $px) (i32.const 8)))
                (local.set $pc (i32.add (local.get $pc) (i32.const 16)))
                (local.set $j (i32.add (local.get $j) (i32.const 1)))
                (br $rest)))
            (v128.store (local.get $po) (f64x2.add (f64x2.add (local.get $s0) (local.get $s1)) (f64x2.add (local.get $s2) (local.get $s3))))
            (local.set $po (i32.add (local.get $po) (i32.const 16)))
            (local.set $p (i32.add (local.get $p) (i32.const 1)))
            (br $pairsLoop)))
        (local.set $g (i32.add (local.get $g) (i32.const 1)))
        (br $rowsLoop))))

  ;; Cholesky factor F (F Fᵀ = DGD + ridge·I) of a q x q matrix G (row-major; entry (j, i),
  ;; j ≤ i, read from G's upper triangle) with scales d, in cholesky.ts's order: rows two at a
  ;; time, row i in lane 0 and row i + 1 in lane 1, entry (i, j) = (G_ji·d_j·d_i − Σ_{k<j}
  ;; F_jk·F_ik) / F_jj with the terms taken in order, multiply then subtract; the diagonal,
  ;; entry (i + 1, i) and a last odd row one lane at a time. A pair's rows go to w interleaved:
  ;; F_ik at w + ((i >> 1)·2q + 2k + (i & 1))·8. Returns 0 at the first pivot not above tol
  ;; (NaN included), else 1.
  (func (export "cholesky") (param $g i32) (param $d i32) (param $q i32) (param $ridge f64) (param $tol f64) (param $w i32) (result i32)
    (local $i i32) (local $j i32) (local $k i32) (local $pair i32) (local $rowJ i32)
    (local $s v128) (local $scales v128) (local $t f64) (local $di f64) (local $dn f64) (local $pairBytes i32)
    (local.set $pairBytes (i32.shl (local.get $q) (i32.const 4)))
    (local.set $i (i32.const 0))
    (block $pairsDone
      (loop $pairs
        (br_if $pairsDone (i32.ge_u (i32.add (local.get $i) (i32.const 1)) (local.get $q)))
        (local.set $pair (i32.add (local.get $w) (i32.mul (i32.shr_u (local.get $i) (i32.const 1)) (local.get $pairBytes))))
        (local.set $di (f64.load (i32.add (local.get $d) (i32.shl (local.get $i) (i32.const 3)))))
        (local.set $dn (f64.load offset=8 (i32.add (local.get $d) (i32.shl (local.get $i) (i32.const 3)))))
        (local.set $scales (v128.load (i32.add (local.get $d) (i32.shl (local.get $i) (i32.const 3)))))
        ;; Entries (i, j) and (i + 1, j) for j < i.
        (local.set $j (i32.const 0))
        (block $columnsDone
          (loop $columns
            (br_if $columnsDone (i32.ge_u (local.get $j) (local.get $i)))
            (local.set $rowJ (call $rowAt (local.get $w) (local.get $pairBytes) (local.get $j)))
            (local.set $s (f64x2.mul
              (f64x2.mul
                (v128.load (i32.add (local.get $g) (i32.shl (i32.add (i32.mul (local.get $j) (local.get $q)) (local.get $i)) (i32.const 3))))
                (v128.load64_splat (i32.add (local.get $d) (i32.shl (local.get $j) (i32.const 3)))))
              (local.get $scales)))
            (local.set $k (i32.const 0))
            (block $termsDone
              (loop $terms
                (br_if $termsDone (i32.ge_u (local.get $k) (local.get $j)))
                (local.set $s (f64x2.sub (local.get $s)
                  (f64x2.mul
                    (v128.load64_splat (i32.add (local.get $rowJ) (i32.shl (local.get $k) (i32.const 4))))
                    (v128.load (i32.add (local.get $pair) (i32.shl (local.get $k) (i32.const 4)))))))
                (local.set $k (i32.add (local.get $k) (i32.const 1)))
                (br $terms)))
            (v128.store (i32.add (local.get $pair) (i32.shl (local.get $j) (i32.const 4)))
              (f64x2.div (local.get $s) (v128.load64_splat (i32.add (local.get $rowJ) (i32.shl (local.get $j) (i32.const 4))))))
            (local.set $j (i32.add (local.get $j) (i32.const 1)))
            (br $columns)))
        (if (i32.eqz (call $pivot (local.get $g) (local.get $q) (local.get $i) (local.get $di) (local.get $ridge) (local.get $tol) (local.get $pair)))
          (then (return (i32.const 0))))
        ;; Entry (i + 1, i).
        (local.set $t (f64.mul
          (f64.mul (f64.load offset=8 (i32.add (local.get $g) (i32.shl (i32.add (i32.mul (local.get $i) (local.get $q)) (local.get $i)) (i32.const 3)))) (local.get $di))
          (local.get $dn)))
        (local.set $k (i32.const 0))
        (block $crossDone
          (loop $cross
            (br_if $crossDone (i32.ge_u (local.get $k) (local.get $i)))
            (local.set $t (f64.sub (local.get $t)
              (f64.mul
                (f64.load (i32.add (local.get $pair) (i32.shl (local.get $k) (i32.const 4))))
                (f64.load offset=8 (i32.add (local.get $pair) (i32.shl (local.get $k) (i32.const 4)))))))
            (local.set $k (i32.add (local.get $k) (i32.const 1)))
            (br $cross)))
        (f64.store offset=8 (i32.add (local.get $pair) (i32.shl (local.get $i) (i32.const 4)))
          (f64.div (local.get $t) (f64.load (i32.add (local.get $pair) (i32.shl (local.get $i) (i32.const 4))))))
        (if (i32.eqz (call $pivot (local.get $g) (local.get $q) (i32.add (local.get $i) (i32.const 1)) (local.get $dn) (local.get $ridge) (local.get $tol) (i32.add (local.get $pair) (i32.const 8))))
          (then (return (i32.const 0))))
        (local.set $i (i32.add (local.get $i) (i32.const 2)))
        (br $pairs)))
    (if (i32.ge_u (local.get $i) (local.get $q)) (then (return (i32.const 1))))
    ;; The last row of an odd q, lane 0 of its pair.
    (local.set $pair (i32.add (local.get $w) (i32.mul (i32.shr_u (local.get $i) (i32.const 1)) (local.get $pairBytes))))
    (local.set $di (f64.load (i32.add (local.get $d) (i32.shl (local.get $i) (i32.const 3)))))
    (local.set $j (i32.const 0))
    (block $lastDone
      (loop $last
        (br_if $lastDone (i32.ge_u (local.get $j) (local.get $i)))
        (local.set $rowJ (call $rowAt (local.get $w) (local.get $pairBytes) (local.get $j)))
        (local.set $t (f64.mul
          (f64.mul
            (f64.load (i32.add (local.get $g) (i32.shl (i32.add (i32.mul (local.get $j) (local.get $q)) (local.get $i)) (i32.const 3))))
            (f64.load (i32.add (local.get $d) (i32.shl (local.get $j) (i32.const 3)))))
          (local.get $di)))
        (local.set $k (i32.const 0))
        (block $lastTermsDone
          (loop $lastTerms
            (br_if $lastTermsDone (i32.ge_u (local.get $k) (local.get $j)))
            (local.set $t (f64.sub (local.get $t)
              (f64.mul
                (f64.load (i32.add (local.get $rowJ) (i32.shl (local.get $k) (i32.const 4))))
                (f64.load (i32.add (local.get $pair) (i32.shl (local.get $k) (i32.const 4)))))))
            (local.set $k (i32.add (local.get $k) (i32.const 1)))
            (br $lastTerms)))
        (f64.store (i32.add (local.get $pair) (i32.shl (local.get $j) (i32.const 4)))
          (f64.div (local.get $t) (f64.load (i32.add (local.get $rowJ) (i32.shl (local.get $j) (i32.const 4))))))
        (local.set $j (i32.add (local.get $j) (i32.const 1)))
        (br $last)))
    (call $pivot (local.get $g) (local.get $q) (local.get $i) (local.get $di) (local.get $ridge) (local.get $tol) (local.get $pair)))

  ;; Where row j of F starts in the interleaved layout (its entries 16 bytes apart).
  (func $rowAt (param $w i32) (param $pairBytes i32) (param $j i32) (result i32)
    (i32.add
      (i32.add (local.get $w) (i32.mul (i32.shr_u (local.get $j) (i32.const 1)) (local.get $pairBytes)))
      (i32.shl (i32.and (local.get $j) (i32.const 1)) (i32.const 3))))

  ;; F_ii = √(G_ii·d_i·d_i + ridge − Σ_{k<i} F_ik²) (G_ii·d_i·d_i taken as 0 when d_i is 0),
  ;; row i's entries at row + 16k; 0 when the pivot is not above tol.
  (func $pivot (param $g i32) (param $q i32) (param $i i32) (param $di f64) (param $ridge f64) (param $tol f64) (param $row i32) (result i32)
    (local $p f64) (local $k i32) (local $f f64)
    (local.set $p (f64.const 0))
    (if (f64.ne (local.get $di) (f64.const 0))
      (then (local.set $p (f64.mul (f64.mul
        (f64.load (i32.add (local.get $g) (i32.shl (i32.mul (local.get $i) (i32.add (local.get $q) (i32.const 1))) (i32.const 3))))
        (local.get $di)) (local.get $di)))))
    (local.set $p (f64.add (local.get $p) (local.get $ridge)))
    (local.set $k (i32.const 0))
    (block $done
      (loop $terms
        (br_if $done (i32.ge_u (local.get $k) (local.get $i)))
        (local.set $f (f64.load (i32.add (local.get $row) (i32.shl (local.get $k) (i32.const 4)))))
        (local.set $p (f64.sub (local.get $p) (f64.mul (local.get $f) (local.get $f))))
        (local.set $k (i32.add (local.get $k) (i32.const 1)))
        (br $terms)))
    (if (i32.eqz (f64.gt (local.get $p) (local.get $tol))) (then (return (i32.const 0))))
    (f64.store (i32.add (local.get $row) (i32.shl (local.get $i) (i32.const 4))) (f64.sqrt (local.get $p)))
    (i32.const 1))
)
