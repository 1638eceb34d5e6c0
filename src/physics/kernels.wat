;; Spinyard's table-sum kernels in WebAssembly with 128-bit SIMD (two doubles per lane pair).
;; The same arithmetic as the JavaScript of src/physics/trig.ts (expNegI) and src/engine/spectral.ts
;; (pair sums); scripts/build-wasm.mjs assembles this file into src/physics/kernels-wasm.ts, and
;; test/physics/kernels.test.ts checks both paths against each other.
;; All offsets are byte offsets into the one exported memory; every length that is looped over two at
;; a time (n speeds, r levels) is even, and the phases' n a multiple of 4 (the caller pads).
;;
;; A row of n complex numbers (one per speed) is stored two speeds at a time: for speeds k, k+1 the
;; real parts (16 bytes), then the imaginary parts (16 bytes). Row a of an r×n array starts at a·16n.
(module
  (memory (export "memory") 1)

  ;; e^{−ix} for the two lanes of x (|x| < 3e9, the caller checks): (cos x, −sin x).
  ;; Reduction by quadrant with π/2 in three parts (fdlibm's split), then the minimax polynomials of
  ;; fdlibm's __kernel_sin and __kernel_cos on |t| ≤ π/4 (within 1 ulp of the correctly rounded value) in
  ;; Estrin's scheme.
  (func $cis (param $x v128) (result v128 v128)
    (local $kq v128) (local $t v128) (local $z v128) (local $z2 v128) (local $z4 v128)
    (local $s v128) (local $c v128) (local $q v128) (local $swap v128) (local $cr v128) (local $sr v128)
    ;; kq = x·2/π rounded to an integer by adding 1.5·2^52 (the sum's low bits are kq in two's complement)
    (local.set $q (f64x2.add (f64x2.mul (local.get $x) (f64x2.splat (f64.const 0.6366197723675814))) (f64x2.splat (f64.const 6755399441055744))))
    (local.set $kq (f64x2.sub (local.get $q) (f64x2.splat (f64.const 6755399441055744))))
    ;; t = ((x − kq·P1) − kq·P2) − kq·P3
    (local.set $t
      (f64x2.sub
        (f64x2.sub
          (f64x2.sub (local.get $x) (f64x2.mul (local.get $kq) (f64x2.splat (f64.const 1.57079632673412561417e+00))))
          (f64x2.mul (local.get $kq) (f64x2.splat (f64.const 6.07710050630396597660e-11))))
        (f64x2.mul (local.get $kq) (f64x2.splat (f64.const 2.02226624879595063154e-21)))))
    (local.set $z (f64x2.mul (local.get $t) (local.get $t)))
    (local.set $z2 (f64x2.mul (local.get $z) (local.get $z)))
    (local.set $z4 (f64x2.mul (local.get $z2) (local.get $z2)))
    ;; s = t + t·z·((S1 + z S2) + z2 (S3 + z S4) + z4 (S5 + z S6))
    (local.set $s
      (f64x2.add (local.get $t)
        (f64x2.mul (f64x2.mul (local.get $t) (local.get $z))
          (f64x2.add
            (f64x2.add
              (f64x2.add (f64x2.splat (f64.const -1.66666666666666324348e-01)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const 8.33333333332248946124e-03))))
              (f64x2.mul (local.get $z2)
                (f64x2.add (f64x2.splat (f64.const -1.98412698298579493134e-04)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const 2.75573137070700676789e-06))))))
            (f64x2.mul (local.get $z4)
              (f64x2.add (f64x2.splat (f64.const -2.50507602534068634195e-08)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const 1.58969099521155010221e-10)))))))))
    ;; c = (1 − z/2) + z2·((C1 + z C2) + z2 (C3 + z C4) + z4 (C5 + z C6))
    (local.set $c
      (f64x2.add
        (f64x2.sub (f64x2.splat (f64.const 1)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const 0.5))))
        (f64x2.mul (local.get $z2)
          (f64x2.add
            (f64x2.add
              (f64x2.add (f64x2.splat (f64.const 4.16666666666666019037e-02)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const -1.38888888888741095749e-03))))
              (f64x2.mul (local.get $z2)
                (f64x2.add (f64x2.splat (f64.const 2.48015872894767294178e-05)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const -2.75573143513906633035e-07))))))
            (f64x2.mul (local.get $z4)
              (f64x2.add (f64x2.splat (f64.const 2.08757232129817482790e-09)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const -1.13596475577881948265e-11)))))))))
    ;; quadrant q = kq mod 4 from the low bits of the rounding sum:
    ;;   cos(t + qπ/2) = (q odd ? s : c), negated for q ≡ 1, 2;  −sin(t + qπ/2) = (q odd ? c : s), negated for q ≡ 0, 1
    (local.set $swap (i64x2.neg (v128.and (local.get $q) (i64x2.splat (i64.const 1)))))
    (local.set $cr (v128.bitselect (local.get $s) (local.get $c) (local.get $swap)))
    (local.set $sr (v128.bitselect (local.get $c) (local.get $s) (local.get $swap)))
    (v128.xor (local.get $cr)
      (i64x2.shl (v128.and (i64x2.add (local.get $q) (i64x2.splat (i64.const 1))) (i64x2.splat (i64.const 2))) (i32.const 62)))
    (v128.xor (local.get $sr)
      (i64x2.shl (v128.xor (v128.and (local.get $q) (i64x2.splat (i64.const 2))) (i64x2.splat (i64.const 2))) (i32.const 62))))

  ;; z_a(k) = √w[k]·e^{−i mu[a]·s[k]} for a < r, k < n (s: the inverse speeds, w: the weights, √w: $q),
  ;; rows as in the module header; then Σ_k z_a conj z_b carries the weights w_k. Four speeds at a time ($n
  ;; a multiple of 4): the arithmetic of $cis, written out twice and interleaved (lanes _0 for speeds k, k+1
  ;; and _1 for k+2, k+3), so that the two independent chains overlap (a call of $cis per pair of speeds
  ;; keeps them apart and measured a third slower).
  (func (export "phases") (param $mu i32) (param $r i32) (param $s i32) (param $q i32) (param $n i32) (param $z i32)
    (local $a i32) (local $k i32) (local $p i32) (local $m v128) (local $x_0 v128) (local $x_1 v128)
    (local $kq_0 v128) (local $t_0 v128) (local $z_0 v128) (local $z2_0 v128) (local $z4_0 v128) (local $s_0 v128) (local $c_0 v128) (local $q_0 v128) (local $swap_0 v128) (local $cr_0 v128) (local $sr_0 v128)
    (local $kq_1 v128) (local $t_1 v128) (local $z_1 v128) (local $z2_1 v128) (local $z4_1 v128) (local $s_1 v128) (local $c_1 v128) (local $q_1 v128) (local $swap_1 v128) (local $cr_1 v128) (local $sr_1 v128)
    (local.set $p (local.get $z))
    (local.set $a (i32.const 0))
    (block $done_a (loop $loop_a
      (br_if $done_a (i32.ge_u (local.get $a) (local.get $r)))
      (local.set $m (f64x2.splat (f64.load (i32.add (local.get $mu) (i32.shl (local.get $a) (i32.const 3))))))
      (local.set $k (i32.const 0))
      (block $done_k (loop $loop_k
        (br_if $done_k (i32.ge_u (local.get $k) (local.get $n)))
        (local.set $x_0 (f64x2.mul (local.get $m) (v128.load offset=0 (i32.add (local.get $s) (i32.shl (local.get $k) (i32.const 3))))))
        (local.set $x_1 (f64x2.mul (local.get $m) (v128.load offset=16 (i32.add (local.get $s) (i32.shl (local.get $k) (i32.const 3))))))
        (local.set $q_0 (f64x2.add (f64x2.mul (local.get $x_0) (f64x2.splat (f64.const 0.6366197723675814))) (f64x2.splat (f64.const 6755399441055744))))
        (local.set $q_1 (f64x2.add (f64x2.mul (local.get $x_1) (f64x2.splat (f64.const 0.6366197723675814))) (f64x2.splat (f64.const 6755399441055744))))
        (local.set $kq_0 (f64x2.sub (local.get $q_0) (f64x2.splat (f64.const 6755399441055744))))
        (local.set $kq_1 (f64x2.sub (local.get $q_1) (f64x2.splat (f64.const 6755399441055744))))
        (local.set $t_0
          (f64x2.sub
            (f64x2.sub
              (f64x2.sub (local.get $x_0) (f64x2.mul (local.get $kq_0) (f64x2.splat (f64.const 1.57079632673412561417e+00))))
              (f64x2.mul (local.get $kq_0) (f64x2.splat (f64.const 6.07710050630396597660e-11))))
            (f64x2.mul (local.get $kq_0) (f64x2.splat (f64.const 2.02226624879595063154e-21)))))
        (local.set $t_1
          (f64x2.sub
            (f64x2.sub
              (f64x2.sub (local.get $x_1) (f64x2.mul (local.get $kq_1) (f64x2.splat (f64.const 1.57079632673412561417e+00))))
              (f64x2.mul (local.get $kq_1) (f64x2.splat (f64.const 6.07710050630396597660e-11))))
            (f64x2.mul (local.get $kq_1) (f64x2.splat (f64.const 2.02226624879595063154e-21)))))
        (local.set $z_0 (f64x2.mul (local.get $t_0) (local.get $t_0)))
        (local.set $z_1 (f64x2.mul (local.get $t_1) (local.get $t_1)))
        (local.set $z2_0 (f64x2.mul (local.get $z_0) (local.get $z_0)))
        (local.set $z2_1 (f64x2.mul (local.get $z_1) (local.get $z_1)))
        (local.set $z4_0 (f64x2.mul (local.get $z2_0) (local.get $z2_0)))
        (local.set $z4_1 (f64x2.mul (local.get $z2_1) (local.get $z2_1)))
        (local.set $s_0
          (f64x2.add (local.get $t_0)
            (f64x2.mul (f64x2.mul (local.get $t_0) (local.get $z_0))
              (f64x2.add
                (f64x2.add
                  (f64x2.add (f64x2.splat (f64.const -1.66666666666666324348e-01)) (f64x2.mul (local.get $z_0) (f64x2.splat (f64.const 8.33333333332248946124e-03))))
                  (f64x2.mul (local.get $z2_0)
                    (f64x2.add (f64x2.splat (f64.const -1.98412698298579493134e-04)) (f64x2.mul (local.get $z_0) (f64x2.splat (f64.const 2.75573137070700676789e-06))))))
                (f64x2.mul (local.get $z4_0)
                  (f64x2.add (f64x2.splat (f64.const -2.50507602534068634195e-08)) (f64x2.mul (local.get $z_0) (f64x2.splat (f64.const 1.58969099521155010221e-10)))))))))
        (local.set $s_1
          (f64x2.add (local.get $t_1)
            (f64x2.mul (f64x2.mul (local.get $t_1) (local.get $z_1))
              (f64x2.add
                (f64x2.add
                  (f64x2.add (f64x2.splat (f64.const -1.66666666666666324348e-01)) (f64x2.mul (local.get $z_1) (f64x2.splat (f64.const 8.33333333332248946124e-03))))
                  (f64x2.mul (local.get $z2_1)
                    (f64x2.add (f64x2.splat (f64.const -1.98412698298579493134e-04)) (f64x2.mul (local.get $z_1) (f64x2.splat (f64.const 2.75573137070700676789e-06))))))
                (f64x2.mul (local.get $z4_1)
                  (f64x2.add (f64x2.splat (f64.const -2.50507602534068634195e-08)) (f64x2.mul (local.get $z_1) (f64x2.splat (f64.const 1.58969099521155010221e-10)))))))))
        (local.set $c_0
          (f64x2.add
            (f64x2.sub (f64x2.splat (f64.const 1)) (f64x2.mul (local.get $z_0) (f64x2.splat (f64.const 0.5))))
            (f64x2.mul (local.get $z2_0)
              (f64x2.add
                (f64x2.add
                  (f64x2.add (f64x2.splat (f64.const 4.16666666666666019037e-02)) (f64x2.mul (local.get $z_0) (f64x2.splat (f64.const -1.38888888888741095749e-03))))
                  (f64x2.mul (local.get $z2_0)
                    (f64x2.add (f64x2.splat (f64.const 2.48015872894767294178e-05)) (f64x2.mul (local.get $z_0) (f64x2.splat (f64.const -2.75573143513906633035e-07))))))
                (f64x2.mul (local.get $z4_0)
                  (f64x2.add (f64x2.splat (f64.const 2.08757232129817482790e-09)) (f64x2.mul (local.get $z_0) (f64x2.splat (f64.const -1.13596475577881948265e-11)))))))))
        (local.set $c_1
          (f64x2.add
            (f64x2.sub (f64x2.splat (f64.const 1)) (f64x2.mul (local.get $z_1) (f64x2.splat (f64.const 0.5))))
            (f64x2.mul (local.get $z2_1)
              (f64x2.add
                (f64x2.add
                  (f64x2.add (f64x2.splat (f64.const 4.16666666666666019037e-02)) (f64x2.mul (local.get $z_1) (f64x2.splat (f64.const -1.38888888888741095749e-03))))
                  (f64x2.mul (local.get $z2_1)
                    (f64x2.add (f64x2.splat (f64.const 2.48015872894767294178e-05)) (f64x2.mul (local.get $z_1) (f64x2.splat (f64.const -2.75573143513906633035e-07))))))
                (f64x2.mul (local.get $z4_1)
                  (f64x2.add (f64x2.splat (f64.const 2.08757232129817482790e-09)) (f64x2.mul (local.get $z_1) (f64x2.splat (f64.const -1.13596475577881948265e-11)))))))))
        (local.set $swap_0 (i64x2.neg (v128.and (local.get $q_0) (i64x2.splat (i64.const 1)))))
        (local.set $swap_1 (i64x2.neg (v128.and (local.get $q_1) (i64x2.splat (i64.const 1)))))
        (local.set $cr_0 (v128.bitselect (local.get $s_0) (local.get $c_0) (local.get $swap_0)))
        (local.set $cr_1 (v128.bitselect (local.get $s_1) (local.get $c_1) (local.get $swap_1)))
        (local.set $sr_0 (v128.bitselect (local.get $c_0) (local.get $s_0) (local.get $swap_0)))
        (local.set $sr_1 (v128.bitselect (local.get $c_1) (local.get $s_1) (local.get $swap_1)))
        ;; (cos x, −sin x) of each pair of speeds, times √w
        (local.set $x_0 (v128.load offset=0 (i32.add (local.get $q) (i32.shl (local.get $k) (i32.const 3)))))
        (local.set $x_1 (v128.load offset=16 (i32.add (local.get $q) (i32.shl (local.get $k) (i32.const 3)))))
        (v128.store offset=0 (local.get $p) (f64x2.mul (local.get $x_0)
          (v128.xor (local.get $cr_0)
            (i64x2.shl (v128.and (i64x2.add (local.get $q_0) (i64x2.splat (i64.const 1))) (i64x2.splat (i64.const 2))) (i32.const 62)))))
        (v128.store offset=16 (local.get $p) (f64x2.mul (local.get $x_0)
          (v128.xor (local.get $sr_0)
            (i64x2.shl (v128.xor (v128.and (local.get $q_0) (i64x2.splat (i64.const 2))) (i64x2.splat (i64.const 2))) (i32.const 62)))))
        (v128.store offset=32 (local.get $p) (f64x2.mul (local.get $x_1)
          (v128.xor (local.get $cr_1)
            (i64x2.shl (v128.and (i64x2.add (local.get $q_1) (i64x2.splat (i64.const 1))) (i64x2.splat (i64.const 2))) (i32.const 62)))))
        (v128.store offset=48 (local.get $p) (f64x2.mul (local.get $x_1)
          (v128.xor (local.get $sr_1)
            (i64x2.shl (v128.xor (v128.and (local.get $q_1) (i64x2.splat (i64.const 2))) (i64x2.splat (i64.const 2))) (i32.const 62)))))
        (local.set $p (i32.add (local.get $p) (i32.const 64)))
        (local.set $k (i32.add (local.get $k) (i32.const 4)))
        (br $loop_k)))
      (local.set $a (i32.add (local.get $a) (i32.const 1)))
      (br $loop_a))))

  ;; e(k) = e^{−i phi·s[k]} (one row; the weights are in z).
  (func (export "weights") (param $phi f64) (param $s i32) (param $n i32) (param $e i32)
    (local $k i32) (local $p i32) (local $m v128) (local $re v128) (local $im v128)
    (local.set $m (f64x2.splat (local.get $phi)))
    (local.set $p (local.get $e))
    (local.set $k (i32.const 0))
    (block $done (loop $loop
      (br_if $done (i32.ge_u (local.get $k) (local.get $n)))
      (call $cis (f64x2.mul (local.get $m) (v128.load (i32.add (local.get $s) (i32.shl (local.get $k) (i32.const 3))))))
      (local.set $im)
      (local.set $re)
      (v128.store offset=0 (local.get $p) (local.get $re))
      (v128.store offset=16 (local.get $p) (local.get $im))
      (local.set $p (i32.add (local.get $p) (i32.const 32)))
      (local.set $k (i32.add (local.get $k) (i32.const 2)))
      (br $loop))))

  ;; y_a = e ∘ z_a (complex), for a < r.
  (func (export "scale") (param $e i32) (param $z i32) (param $y i32) (param $n i32) (param $r i32)
    (local $a i32) (local $pe i32) (local $pz i32) (local $py i32) (local $end i32)
    (local $er v128) (local $ei v128) (local $vr v128) (local $vi v128)
    (local.set $pz (local.get $z))
    (local.set $py (local.get $y))
    (local.set $a (i32.const 0))
    (block $done_a (loop $loop_a
      (br_if $done_a (i32.ge_u (local.get $a) (local.get $r)))
      (local.set $pe (local.get $e))
      (local.set $end (i32.add (local.get $e) (i32.shl (local.get $n) (i32.const 4))))
      (block $done_k (loop $loop_k
        (br_if $done_k (i32.ge_u (local.get $pe) (local.get $end)))
        (local.set $er (v128.load offset=0 (local.get $pe)))
        (local.set $ei (v128.load offset=16 (local.get $pe)))
        (local.set $vr (v128.load offset=0 (local.get $pz)))
        (local.set $vi (v128.load offset=16 (local.get $pz)))
        (v128.store offset=0 (local.get $py)
          (f64x2.sub (f64x2.mul (local.get $er) (local.get $vr)) (f64x2.mul (local.get $ei) (local.get $vi))))
        (v128.store offset=16 (local.get $py)
          (f64x2.add (f64x2.mul (local.get $er) (local.get $vi)) (f64x2.mul (local.get $ei) (local.get $vr))))
        (local.set $pe (i32.add (local.get $pe) (i32.const 32)))
        (local.set $pz (i32.add (local.get $pz) (i32.const 32)))
        (local.set $py (i32.add (local.get $py) (i32.const 32)))
        (br $loop_k)))
      (local.set $a (i32.add (local.get $a) (i32.const 1)))
      (br $loop_a))))

  ;; S_ab = Σ_k y_a(k) conj(z_b(k)) in 2×2 blocks of (a, b); a block is summed when any of its four
  ;; bytes of todo (r×r, row-major) is set, and all four entries of S (complex, interleaved) are written.
  (func (export "pairs") (param $y i32) (param $z i32) (param $n i32) (param $r i32) (param $todo i32) (param $S i32)
    (local $a i32) (local $b i32) (local $i i32) (local $q i32) (local $row i32)
    (local $pa i32) (local $pb i32) (local $end i32)
    (local $a0r v128) (local $a0i v128) (local $a1r v128) (local $a1i v128)
    (local $b0r v128) (local $b0i v128) (local $b1r v128) (local $b1i v128)
    (local $p00r v128) (local $p00i v128) (local $p01r v128) (local $p01i v128)
    (local $p10r v128) (local $p10i v128) (local $p11r v128) (local $p11i v128)
    (local.set $row (i32.shl (local.get $n) (i32.const 4)))
    (local.set $a (i32.const 0))
    (block $done_a (loop $loop_a
      (br_if $done_a (i32.ge_u (local.get $a) (local.get $r)))
      (local.set $b (i32.const 0))
      (block $done_b (loop $loop_b
        (br_if $done_b (i32.ge_u (local.get $b) (local.get $r)))
        (local.set $i (i32.add (i32.mul (local.get $a) (local.get $r)) (local.get $b)))
        (if (i32.or
              (i32.load16_u (i32.add (local.get $todo) (local.get $i)))
              (i32.load16_u (i32.add (local.get $todo) (i32.add (local.get $i) (local.get $r)))))
          (then
            (local.set $pa (i32.add (local.get $y) (i32.mul (local.get $a) (local.get $row))))
            (local.set $pb (i32.add (local.get $z) (i32.mul (local.get $b) (local.get $row))))
            (local.set $end (i32.add (local.get $pa) (local.get $row)))
            ;; a diagonal block of a Hermitian S, where only (a, a + 1) is wanted: that one sum alone
            (if (i32.and (i32.eq (local.get $a) (local.get $b))
                  (i32.eqz (i32.or
                    (i32.load8_u (i32.add (local.get $todo) (local.get $i)))
                    (i32.load16_u (i32.add (local.get $todo) (i32.add (local.get $i) (local.get $r)))))))
              (then
                (local.set $pb (i32.add (local.get $pb) (local.get $row)))
                (local.set $p01r (v128.const f64x2 0 0)) (local.set $p01i (v128.const f64x2 0 0))
                (block $done_d (loop $loop_d
                  (br_if $done_d (i32.ge_u (local.get $pa) (local.get $end)))
                  (local.set $a0r (v128.load offset=0 (local.get $pa)))
                  (local.set $a0i (v128.load offset=16 (local.get $pa)))
                  (local.set $b1r (v128.load offset=0 (local.get $pb)))
                  (local.set $b1i (v128.load offset=16 (local.get $pb)))
                  (local.set $p01r (f64x2.add (local.get $p01r) (f64x2.add (f64x2.mul (local.get $a0r) (local.get $b1r)) (f64x2.mul (local.get $a0i) (local.get $b1i)))))
                  (local.set $p01i (f64x2.add (local.get $p01i) (f64x2.sub (f64x2.mul (local.get $a0i) (local.get $b1r)) (f64x2.mul (local.get $a0r) (local.get $b1i)))))
                  (local.set $pa (i32.add (local.get $pa) (i32.const 32)))
                  (local.set $pb (i32.add (local.get $pb) (i32.const 32)))
                  (br $loop_d)))
                (local.set $q (i32.add (local.get $S) (i32.shl (local.get $i) (i32.const 4))))
                (f64.store offset=16 (local.get $q) (f64.add (f64x2.extract_lane 0 (local.get $p01r)) (f64x2.extract_lane 1 (local.get $p01r))))
                (f64.store offset=24 (local.get $q) (f64.add (f64x2.extract_lane 0 (local.get $p01i)) (f64x2.extract_lane 1 (local.get $p01i)))))
              (else
                (local.set $p00r (v128.const f64x2 0 0)) (local.set $p00i (v128.const f64x2 0 0))
                (local.set $p01r (v128.const f64x2 0 0)) (local.set $p01i (v128.const f64x2 0 0))
                (local.set $p10r (v128.const f64x2 0 0)) (local.set $p10i (v128.const f64x2 0 0))
                (local.set $p11r (v128.const f64x2 0 0)) (local.set $p11i (v128.const f64x2 0 0))
                (block $done_k (loop $loop_k
                  (br_if $done_k (i32.ge_u (local.get $pa) (local.get $end)))
                  (local.set $a0r (v128.load offset=0 (local.get $pa)))
                  (local.set $a0i (v128.load offset=16 (local.get $pa)))
                  (local.set $b0r (v128.load offset=0 (local.get $pb)))
                  (local.set $b0i (v128.load offset=16 (local.get $pb)))
                  ;; p += a·conj(b): re += ar br + ai bi, im += ai br − ar bi
                  (local.set $p00r (f64x2.add (local.get $p00r) (f64x2.add (f64x2.mul (local.get $a0r) (local.get $b0r)) (f64x2.mul (local.get $a0i) (local.get $b0i)))))
                  (local.set $p00i (f64x2.add (local.get $p00i) (f64x2.sub (f64x2.mul (local.get $a0i) (local.get $b0r)) (f64x2.mul (local.get $a0r) (local.get $b0i)))))
                  (local.set $a1r (v128.load offset=0 (i32.add (local.get $pa) (local.get $row))))
                  (local.set $a1i (v128.load offset=16 (i32.add (local.get $pa) (local.get $row))))
                  (local.set $p10r (f64x2.add (local.get $p10r) (f64x2.add (f64x2.mul (local.get $a1r) (local.get $b0r)) (f64x2.mul (local.get $a1i) (local.get $b0i)))))
                  (local.set $p10i (f64x2.add (local.get $p10i) (f64x2.sub (f64x2.mul (local.get $a1i) (local.get $b0r)) (f64x2.mul (local.get $a1r) (local.get $b0i)))))
                  (local.set $b1r (v128.load offset=0 (i32.add (local.get $pb) (local.get $row))))
                  (local.set $b1i (v128.load offset=16 (i32.add (local.get $pb) (local.get $row))))
                  (local.set $p01r (f64x2.add (local.get $p01r) (f64x2.add (f64x2.mul (local.get $a0r) (local.get $b1r)) (f64x2.mul (local.get $a0i) (local.get $b1i)))))
                  (local.set $p01i (f64x2.add (local.get $p01i) (f64x2.sub (f64x2.mul (local.get $a0i) (local.get $b1r)) (f64x2.mul (local.get $a0r) (local.get $b1i)))))
                  (local.set $p11r (f64x2.add (local.get $p11r) (f64x2.add (f64x2.mul (local.get $a1r) (local.get $b1r)) (f64x2.mul (local.get $a1i) (local.get $b1i)))))
                  (local.set $p11i (f64x2.add (local.get $p11i) (f64x2.sub (f64x2.mul (local.get $a1i) (local.get $b1r)) (f64x2.mul (local.get $a1r) (local.get $b1i)))))
                  (local.set $pa (i32.add (local.get $pa) (i32.const 32)))
                  (local.set $pb (i32.add (local.get $pb) (i32.const 32)))
                  (br $loop_k)))
                ;; S[2i], S[2i+1], S[2i+2], S[2i+3]; the next row at i + r
                (local.set $q (i32.add (local.get $S) (i32.shl (local.get $i) (i32.const 4))))
                (f64.store offset=0 (local.get $q) (f64.add (f64x2.extract_lane 0 (local.get $p00r)) (f64x2.extract_lane 1 (local.get $p00r))))
                (f64.store offset=8 (local.get $q) (f64.add (f64x2.extract_lane 0 (local.get $p00i)) (f64x2.extract_lane 1 (local.get $p00i))))
                (f64.store offset=16 (local.get $q) (f64.add (f64x2.extract_lane 0 (local.get $p01r)) (f64x2.extract_lane 1 (local.get $p01r))))
                (f64.store offset=24 (local.get $q) (f64.add (f64x2.extract_lane 0 (local.get $p01i)) (f64x2.extract_lane 1 (local.get $p01i))))
                (local.set $q (i32.add (local.get $q) (i32.shl (local.get $r) (i32.const 4))))
                (f64.store offset=0 (local.get $q) (f64.add (f64x2.extract_lane 0 (local.get $p10r)) (f64x2.extract_lane 1 (local.get $p10r))))
                (f64.store offset=8 (local.get $q) (f64.add (f64x2.extract_lane 0 (local.get $p10i)) (f64x2.extract_lane 1 (local.get $p10i))))
                (f64.store offset=16 (local.get $q) (f64.add (f64x2.extract_lane 0 (local.get $p11r)) (f64x2.extract_lane 1 (local.get $p11r))))
                (f64.store offset=24 (local.get $q) (f64.add (f64x2.extract_lane 0 (local.get $p11i)) (f64x2.extract_lane 1 (local.get $p11i))))))))
        (local.set $b (i32.add (local.get $b) (i32.const 2)))
        (br $loop_b)))
      (local.set $a (i32.add (local.get $a) (i32.const 2)))
      (br $loop_a))))

;; The pairs a term needs, from its X (r×r at $xr, $xi, row stride $rp, padding untouched): with
  ;; cut = 1e-18·max_ab (|Re X_ab| + |Im X_ab|), todo[a·rp + b] = 1 where |X_ab| (that 1-norm) exceeds
  ;; cut, and for a Hermitian term ($herm) only b > a, where X_ab or X_ba does; every other byte of the
  ;; rp×rp todo is 0. Returns 1 when any pair is needed. The arithmetic of separableAverage in
  ;; src/engine/spectral.ts (its JavaScript path).
  (func (export "need") (param $xr i32) (param $xi i32) (param $r i32) (param $rp i32) (param $herm i32) (param $todo i32) (result i32)
    (local $a i32) (local $b i32) (local $i i32) (local $j i32) (local $any i32) (local $m f64) (local $cut f64) (local $on i32)
    (local.set $m (f64.const 0))
    (local.set $a (i32.const 0))
    (block $done_a (loop $loop_a
      (br_if $done_a (i32.ge_u (local.get $a) (local.get $r)))
      (local.set $b (i32.const 0))
      (block $done_b (loop $loop_b
        (br_if $done_b (i32.ge_u (local.get $b) (local.get $r)))
        (local.set $i (i32.shl (i32.add (i32.mul (local.get $a) (local.get $rp)) (local.get $b)) (i32.const 3)))
        (local.set $m (f64.max (local.get $m)
          (f64.add (f64.abs (f64.load (i32.add (local.get $xr) (local.get $i)))) (f64.abs (f64.load (i32.add (local.get $xi) (local.get $i)))))))
        (local.set $b (i32.add (local.get $b) (i32.const 1)))
        (br $loop_b)))
      (local.set $a (i32.add (local.get $a) (i32.const 1)))
      (br $loop_a)))
    (local.set $cut (f64.mul (f64.const 1e-18) (local.get $m)))
    (memory.fill (local.get $todo) (i32.const 0) (i32.mul (local.get $rp) (local.get $rp)))
    (local.set $a (i32.const 0))
    (block $done_a2 (loop $loop_a2
      (br_if $done_a2 (i32.ge_u (local.get $a) (local.get $r)))
      (local.set $b (select (i32.add (local.get $a) (i32.const 1)) (i32.const 0) (local.get $herm)))
      (block $done_b2 (loop $loop_b2
        (br_if $done_b2 (i32.ge_u (local.get $b) (local.get $r)))
        (local.set $i (i32.shl (i32.add (i32.mul (local.get $a) (local.get $rp)) (local.get $b)) (i32.const 3)))
        (local.set $on (f64.gt
          (f64.add (f64.abs (f64.load (i32.add (local.get $xr) (local.get $i)))) (f64.abs (f64.load (i32.add (local.get $xi) (local.get $i)))))
          (local.get $cut)))
        (if (local.get $herm)
          (then
            (local.set $j (i32.shl (i32.add (i32.mul (local.get $b) (local.get $rp)) (local.get $a)) (i32.const 3)))
            (local.set $on (i32.or (local.get $on) (f64.gt
              (f64.add (f64.abs (f64.load (i32.add (local.get $xr) (local.get $j)))) (f64.abs (f64.load (i32.add (local.get $xi) (local.get $j)))))
              (local.get $cut))))))
        (i32.store8 (i32.add (local.get $todo) (i32.add (i32.mul (local.get $a) (local.get $rp)) (local.get $b))) (local.get $on))
        (local.set $any (i32.or (local.get $any) (local.get $on)))
        (local.set $b (i32.add (local.get $b) (i32.const 1)))
        (br $loop_b2)))
      (local.set $a (i32.add (local.get $a) (i32.const 1)))
      (br $loop_a2)))
    (local.get $any))

  ;; A += X ∘ S over the pairs in todo (S as the pair sums write it: S_ab at $s + 16(a·rp + b), real then
  ;; imaginary), all r×r with row stride rp; for a Hermitian term ($herm) S_ba = conj S_ab fills the
  ;; mirror entry, and the diagonal is X_aa times the weights' sum $wsum. The arithmetic and its order
  ;; are those of separableAverage's JavaScript contraction.
  (func (export "contract") (param $xr i32) (param $xi i32) (param $s i32) (param $todo i32) (param $r i32) (param $rp i32)
        (param $herm i32) (param $wsum f64) (param $ar i32) (param $ai i32)
    (local $a i32) (local $b i32) (local $i i32) (local $j i32) (local $sr f64) (local $si f64)
    (if (local.get $herm)
      (then
        (local.set $a (i32.const 0))
        (block $done_d (loop $loop_d
          (br_if $done_d (i32.ge_u (local.get $a) (local.get $r)))
          (local.set $i (i32.shl (i32.mul (local.get $a) (i32.add (local.get $rp) (i32.const 1))) (i32.const 3)))
          (f64.store (i32.add (local.get $ar) (local.get $i))
            (f64.add (f64.load (i32.add (local.get $ar) (local.get $i))) (f64.mul (f64.load (i32.add (local.get $xr) (local.get $i))) (local.get $wsum))))
          (f64.store (i32.add (local.get $ai) (local.get $i))
            (f64.add (f64.load (i32.add (local.get $ai) (local.get $i))) (f64.mul (f64.load (i32.add (local.get $xi) (local.get $i))) (local.get $wsum))))
          (local.set $a (i32.add (local.get $a) (i32.const 1)))
          (br $loop_d)))))
    (local.set $a (i32.const 0))
    (block $done_a (loop $loop_a
      (br_if $done_a (i32.ge_u (local.get $a) (local.get $r)))
      (local.set $b (select (i32.add (local.get $a) (i32.const 1)) (i32.const 0) (local.get $herm)))
      (block $done_b (loop $loop_b
        (br_if $done_b (i32.ge_u (local.get $b) (local.get $r)))
        (if (i32.load8_u (i32.add (local.get $todo) (i32.add (i32.mul (local.get $a) (local.get $rp)) (local.get $b))))
          (then
            (local.set $i (i32.add (i32.mul (local.get $a) (local.get $rp)) (local.get $b)))
            (local.set $sr (f64.load (i32.add (local.get $s) (i32.shl (local.get $i) (i32.const 4)))))
            (local.set $si (f64.load offset=8 (i32.add (local.get $s) (i32.shl (local.get $i) (i32.const 4)))))
            (local.set $i (i32.shl (local.get $i) (i32.const 3)))
            (f64.store (i32.add (local.get $ar) (local.get $i))
              (f64.add (f64.load (i32.add (local.get $ar) (local.get $i)))
                (f64.sub (f64.mul (f64.load (i32.add (local.get $xr) (local.get $i))) (local.get $sr)) (f64.mul (f64.load (i32.add (local.get $xi) (local.get $i))) (local.get $si)))))
            (f64.store (i32.add (local.get $ai) (local.get $i))
              (f64.add (f64.load (i32.add (local.get $ai) (local.get $i)))
                (f64.add (f64.mul (f64.load (i32.add (local.get $xr) (local.get $i))) (local.get $si)) (f64.mul (f64.load (i32.add (local.get $xi) (local.get $i))) (local.get $sr)))))
            (if (local.get $herm)
              (then
                (local.set $j (i32.shl (i32.add (i32.mul (local.get $b) (local.get $rp)) (local.get $a)) (i32.const 3)))
                (f64.store (i32.add (local.get $ar) (local.get $j))
                  (f64.add (f64.load (i32.add (local.get $ar) (local.get $j)))
                    (f64.add (f64.mul (f64.load (i32.add (local.get $xr) (local.get $j))) (local.get $sr)) (f64.mul (f64.load (i32.add (local.get $xi) (local.get $j))) (local.get $si)))))
                (f64.store (i32.add (local.get $ai) (local.get $j))
                  (f64.add (f64.load (i32.add (local.get $ai) (local.get $j)))
                    (f64.sub (f64.mul (f64.load (i32.add (local.get $xi) (local.get $j))) (local.get $sr)) (f64.mul (f64.load (i32.add (local.get $xr) (local.get $j))) (local.get $si)))))))))
        (local.set $b (i32.add (local.get $b) (i32.const 1)))
        (br $loop_b)))
      (local.set $a (i32.add (local.get $a) (i32.const 1)))
      (br $loop_a))))

  ;; out = Σ_k sg[k] z_k z_k† (Hermitian, d×d, real parts at $or and imaginary parts at $oi, row-major
  ;; with stride $dp), z_k = row k of (zr, zi) (m rows of stride $dp; $dp even, padding zero). Row i is
  ;; accumulated in place, two columns j at a time from j = i rounded down to even: out_ij +=
  ;; (sg_k z_ki)·conj(z_kj) for each k. Entries with j < i are left as they are (the caller mirrors the upper
  ;; half); out is zeroed by the caller.
  (func (export "gram") (param $zr i32) (param $zi i32) (param $sg i32) (param $m i32) (param $d i32) (param $dp i32) (param $or i32) (param $oi i32)
    (local $i i32) (local $k i32) (local $row i32) (local $zk i32) (local $j i32) (local $end i32) (local $o i32)
    (local $ar v128) (local $ai v128) (local $br v128) (local $bi v128) (local $s f64)
    (local.set $row (i32.shl (local.get $dp) (i32.const 3)))
    (local.set $i (i32.const 0))
    (block $done_i (loop $loop_i
      (br_if $done_i (i32.ge_u (local.get $i) (local.get $d)))
      (local.set $k (i32.const 0))
      (block $done_k (loop $loop_k
        (br_if $done_k (i32.ge_u (local.get $k) (local.get $m)))
        (local.set $zk (i32.mul (local.get $k) (local.get $row)))
        ;; a = sg_k·z_ki, both lanes
        (local.set $s (f64.load (i32.add (local.get $sg) (i32.shl (local.get $k) (i32.const 3)))))
        (local.set $ar (f64x2.splat (f64.mul (local.get $s) (f64.load (i32.add (local.get $zr) (i32.add (local.get $zk) (i32.shl (local.get $i) (i32.const 3))))))))
        (local.set $ai (f64x2.splat (f64.mul (local.get $s) (f64.load (i32.add (local.get $zi) (i32.add (local.get $zk) (i32.shl (local.get $i) (i32.const 3))))))))
        ;; byte offsets of columns j … d within a row
        (local.set $j (i32.shl (i32.and (local.get $i) (i32.const -2)) (i32.const 3)))
        (local.set $end (i32.shl (local.get $d) (i32.const 3)))
        (local.set $o (i32.mul (local.get $i) (local.get $row)))
        (block $done_j (loop $loop_j
          (br_if $done_j (i32.ge_u (local.get $j) (local.get $end)))
          (local.set $br (v128.load (i32.add (local.get $zr) (i32.add (local.get $zk) (local.get $j)))))
          (local.set $bi (v128.load (i32.add (local.get $zi) (i32.add (local.get $zk) (local.get $j)))))
          ;; a·conj(b): re = ar br + ai bi, im = ai br − ar bi
          (v128.store (i32.add (local.get $or) (i32.add (local.get $o) (local.get $j)))
            (f64x2.add (v128.load (i32.add (local.get $or) (i32.add (local.get $o) (local.get $j))))
              (f64x2.add (f64x2.mul (local.get $ar) (local.get $br)) (f64x2.mul (local.get $ai) (local.get $bi)))))
          (v128.store (i32.add (local.get $oi) (i32.add (local.get $o) (local.get $j)))
            (f64x2.add (v128.load (i32.add (local.get $oi) (i32.add (local.get $o) (local.get $j))))
              (f64x2.sub (f64x2.mul (local.get $ai) (local.get $br)) (f64x2.mul (local.get $ar) (local.get $bi)))))
          (local.set $j (i32.add (local.get $j) (i32.const 16)))
          (br $loop_j)))
        (local.set $k (i32.add (local.get $k) (i32.const 1)))
        (br $loop_k)))
      (local.set $i (i32.add (local.get $i) (i32.const 1)))
      (br $loop_i))))

  ;; 1 when the Hermitian part of a (n×n, real parts at $ar, imaginary at $ai, row-major) plus δ·1 has a
  ;; Cholesky factor (every eigenvalue above −δ), else 0; the factor is built at $lr, $li (n×n, zeroed
  ;; by the caller). The arithmetic and its order are those of isPositive in src/engine/spectral.ts.
  (func (export "chol") (param $ar i32) (param $ai i32) (param $n i32) (param $delta f64) (param $lr i32) (param $li i32) (result i32)
    (local $i i32) (local $j i32) (local $k i32) (local $ij i32) (local $ji i32) (local $ik i32) (local $jk i32)
    (local $d f64) (local $l f64) (local $sr f64) (local $si f64) (local $xr f64) (local $xi f64) (local $yr f64) (local $yi f64)
    (local.set $j (i32.const 0))
    (block $done_j (loop $loop_j
      (br_if $done_j (i32.ge_u (local.get $j) (local.get $n)))
      (local.set $ij (i32.shl (i32.add (i32.mul (local.get $j) (local.get $n)) (local.get $j)) (i32.const 3)))
      (local.set $d (f64.add (f64.mul (f64.const 0.5) (f64.add (f64.load (i32.add (local.get $ar) (local.get $ij))) (f64.load (i32.add (local.get $ar) (local.get $ij))))) (local.get $delta)))
      (local.set $k (i32.const 0))
      (block $done_k (loop $loop_k
        (br_if $done_k (i32.ge_u (local.get $k) (local.get $j)))
        (local.set $jk (i32.shl (i32.add (i32.mul (local.get $j) (local.get $n)) (local.get $k)) (i32.const 3)))
        (local.set $xr (f64.load (i32.add (local.get $lr) (local.get $jk))))
        (local.set $xi (f64.load (i32.add (local.get $li) (local.get $jk))))
        (local.set $d (f64.sub (local.get $d) (f64.add (f64.mul (local.get $xr) (local.get $xr)) (f64.mul (local.get $xi) (local.get $xi)))))
        (local.set $k (i32.add (local.get $k) (i32.const 1)))
        (br $loop_k)))
      (if (i32.eqz (f64.gt (local.get $d) (f64.const 0))) (then (return (i32.const 0))))
      (local.set $l (f64.sqrt (local.get $d)))
      (f64.store (i32.add (local.get $lr) (local.get $ij)) (local.get $l))
      (local.set $i (i32.add (local.get $j) (i32.const 1)))
      (block $done_i (loop $loop_i
        (br_if $done_i (i32.ge_u (local.get $i) (local.get $n)))
        (local.set $ij (i32.shl (i32.add (i32.mul (local.get $i) (local.get $n)) (local.get $j)) (i32.const 3)))
        (local.set $ji (i32.shl (i32.add (i32.mul (local.get $j) (local.get $n)) (local.get $i)) (i32.const 3)))
        (local.set $sr (f64.mul (f64.const 0.5) (f64.add (f64.load (i32.add (local.get $ar) (local.get $ij))) (f64.load (i32.add (local.get $ar) (local.get $ji))))))
        (local.set $si (f64.mul (f64.const 0.5) (f64.sub (f64.load (i32.add (local.get $ai) (local.get $ij))) (f64.load (i32.add (local.get $ai) (local.get $ji))))))
        (local.set $k (i32.const 0))
        (block $done_k2 (loop $loop_k2
          (br_if $done_k2 (i32.ge_u (local.get $k) (local.get $j)))
          (local.set $ik (i32.shl (i32.add (i32.mul (local.get $i) (local.get $n)) (local.get $k)) (i32.const 3)))
          (local.set $jk (i32.shl (i32.add (i32.mul (local.get $j) (local.get $n)) (local.get $k)) (i32.const 3)))
          (local.set $xr (f64.load (i32.add (local.get $lr) (local.get $ik))))
          (local.set $xi (f64.load (i32.add (local.get $li) (local.get $ik))))
          (local.set $yr (f64.load (i32.add (local.get $lr) (local.get $jk))))
          (local.set $yi (f64.load (i32.add (local.get $li) (local.get $jk))))
          ;; L_ik conj(L_jk)
          (local.set $sr (f64.sub (local.get $sr) (f64.add (f64.mul (local.get $xr) (local.get $yr)) (f64.mul (local.get $xi) (local.get $yi)))))
          (local.set $si (f64.sub (local.get $si) (f64.sub (f64.mul (local.get $xi) (local.get $yr)) (f64.mul (local.get $xr) (local.get $yi)))))
          (local.set $k (i32.add (local.get $k) (i32.const 1)))
          (br $loop_k2)))
        (f64.store (i32.add (local.get $lr) (local.get $ij)) (f64.div (local.get $sr) (local.get $l)))
        (f64.store (i32.add (local.get $li) (local.get $ij)) (f64.div (local.get $si) (local.get $l)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $loop_i)))
      (local.set $j (i32.add (local.get $j) (i32.const 1)))
      (br $loop_j)))
    (i32.const 1))

  ;; N = B H B†, H = (A + A†)/2 (A r×r at $ar, $ai), B (d×r at $br, $bi) sparse by rows: row i has the
  ;; columns cols[rowStart[i]] … cols[rowStart[i+1] − 1] (i32 arrays). H is formed once at $hr, $hi and
  ;; T = B H (d×rp) at $tr, $ti, both with the row stride rp = r rounded up to even (the padding column
  ;; zero), so that a row of T is summed two columns at a time; N (d×d at $nr, $ni) is written for j ≥ i
  ;; and mirrored (Hermitian).
  (func (export "bhb") (param $br i32) (param $bi i32) (param $rs i32) (param $cols i32) (param $d i32) (param $r i32)
        (param $ar i32) (param $ai i32) (param $hr i32) (param $hi i32) (param $tr i32) (param $ti i32) (param $nr i32) (param $ni i32)
    (local $i i32) (local $j i32) (local $p i32) (local $pe i32) (local $a i32) (local $c i32) (local $o i32) (local $rp i32)
    (local $row i32) (local $end i32) (local $ha i32) (local $ti0 i32)
    (local $xr v128) (local $xi v128) (local $yr v128) (local $yi v128)
    (local $ur f64) (local $ui f64) (local $vr f64) (local $vi f64) (local $sr f64) (local $si f64)
    (local.set $rp (i32.add (local.get $r) (i32.and (local.get $r) (i32.const 1))))
    (local.set $row (i32.shl (local.get $rp) (i32.const 3)))
    ;; H_ac = (A_ac + conj A_ca)/2 and H_ca = conj H_ac, for c ≥ a; the padding column 0
    (local.set $a (i32.const 0))
    (block $done_ha (loop $loop_ha
      (br_if $done_ha (i32.ge_u (local.get $a) (local.get $r)))
      (local.set $c (local.get $a))
      (block $done_hc (loop $loop_hc
        (br_if $done_hc (i32.ge_u (local.get $c) (local.get $r)))
        (local.set $i (i32.shl (i32.add (i32.mul (local.get $a) (local.get $r)) (local.get $c)) (i32.const 3)))
        (local.set $j (i32.shl (i32.add (i32.mul (local.get $c) (local.get $r)) (local.get $a)) (i32.const 3)))
        (local.set $sr (f64.mul (f64.const 0.5) (f64.add (f64.load (i32.add (local.get $ar) (local.get $i))) (f64.load (i32.add (local.get $ar) (local.get $j))))))
        (local.set $si (f64.mul (f64.const 0.5) (f64.sub (f64.load (i32.add (local.get $ai) (local.get $i))) (f64.load (i32.add (local.get $ai) (local.get $j))))))
        (local.set $o (i32.add (i32.mul (local.get $a) (local.get $row)) (i32.shl (local.get $c) (i32.const 3))))
        (f64.store (i32.add (local.get $hr) (local.get $o)) (local.get $sr))
        (f64.store (i32.add (local.get $hi) (local.get $o)) (local.get $si))
        (local.set $o (i32.add (i32.mul (local.get $c) (local.get $row)) (i32.shl (local.get $a) (i32.const 3))))
        (f64.store (i32.add (local.get $hr) (local.get $o)) (local.get $sr))
        (f64.store (i32.add (local.get $hi) (local.get $o)) (f64.neg (local.get $si)))
        (local.set $c (i32.add (local.get $c) (i32.const 1)))
        (br $loop_hc)))
      (if (i32.ne (local.get $r) (local.get $rp))
        (then
          (local.set $o (i32.add (i32.mul (local.get $a) (local.get $row)) (i32.shl (local.get $r) (i32.const 3))))
          (f64.store (i32.add (local.get $hr) (local.get $o)) (f64.const 0))
          (f64.store (i32.add (local.get $hi) (local.get $o)) (f64.const 0))))
      (local.set $a (i32.add (local.get $a) (i32.const 1)))
      (br $loop_ha)))
    ;; T_i = Σ_{a ∈ cols(i)} B_ia H_a (row a of H), two columns at a time
    (local.set $end (local.get $row))
    (local.set $i (i32.const 0))
    (block $done_i (loop $loop_i
      (br_if $done_i (i32.ge_u (local.get $i) (local.get $d)))
      (local.set $ti0 (i32.mul (local.get $i) (local.get $row)))
      ;; zero row i of T
      (local.set $c (i32.const 0))
      (block $done_z (loop $loop_z
        (br_if $done_z (i32.ge_u (local.get $c) (local.get $end)))
        (v128.store (i32.add (local.get $tr) (i32.add (local.get $ti0) (local.get $c))) (v128.const f64x2 0 0))
        (v128.store (i32.add (local.get $ti) (i32.add (local.get $ti0) (local.get $c))) (v128.const f64x2 0 0))
        (local.set $c (i32.add (local.get $c) (i32.const 16)))
        (br $loop_z)))
      (local.set $p (i32.load (i32.add (local.get $rs) (i32.shl (local.get $i) (i32.const 2)))))
      (local.set $pe (i32.load (i32.add (local.get $rs) (i32.shl (i32.add (local.get $i) (i32.const 1)) (i32.const 2)))))
      (block $done_p (loop $loop_p
        (br_if $done_p (i32.ge_u (local.get $p) (local.get $pe)))
        (local.set $a (i32.load (i32.add (local.get $cols) (i32.shl (local.get $p) (i32.const 2)))))
        (local.set $o (i32.shl (i32.add (i32.mul (local.get $i) (local.get $r)) (local.get $a)) (i32.const 3)))
        (local.set $xr (f64x2.splat (f64.load (i32.add (local.get $br) (local.get $o)))))
        (local.set $xi (f64x2.splat (f64.load (i32.add (local.get $bi) (local.get $o)))))
        (local.set $ha (i32.mul (local.get $a) (local.get $row)))
        (local.set $c (i32.const 0))
        (block $done_c (loop $loop_c
          (br_if $done_c (i32.ge_u (local.get $c) (local.get $end)))
          (local.set $yr (v128.load (i32.add (local.get $hr) (i32.add (local.get $ha) (local.get $c)))))
          (local.set $yi (v128.load (i32.add (local.get $hi) (i32.add (local.get $ha) (local.get $c)))))
          (v128.store (i32.add (local.get $tr) (i32.add (local.get $ti0) (local.get $c)))
            (f64x2.add (v128.load (i32.add (local.get $tr) (i32.add (local.get $ti0) (local.get $c))))
              (f64x2.sub (f64x2.mul (local.get $xr) (local.get $yr)) (f64x2.mul (local.get $xi) (local.get $yi)))))
          (v128.store (i32.add (local.get $ti) (i32.add (local.get $ti0) (local.get $c)))
            (f64x2.add (v128.load (i32.add (local.get $ti) (i32.add (local.get $ti0) (local.get $c))))
              (f64x2.add (f64x2.mul (local.get $xr) (local.get $yi)) (f64x2.mul (local.get $xi) (local.get $yr)))))
          (local.set $c (i32.add (local.get $c) (i32.const 16)))
          (br $loop_c)))
        (local.set $p (i32.add (local.get $p) (i32.const 1)))
        (br $loop_p)))
      (local.set $i (i32.add (local.get $i) (i32.const 1)))
      (br $loop_i)))
    ;; N_ij = Σ_{c ∈ cols(j)} T_ic conj(B_jc)
    (local.set $i (i32.const 0))
    (block $done_i2 (loop $loop_i2
      (br_if $done_i2 (i32.ge_u (local.get $i) (local.get $d)))
      (local.set $ti0 (i32.mul (local.get $i) (local.get $row)))
      (local.set $j (local.get $i))
      (block $done_j (loop $loop_j
        (br_if $done_j (i32.ge_u (local.get $j) (local.get $d)))
        (local.set $sr (f64.const 0))
        (local.set $si (f64.const 0))
        (local.set $p (i32.load (i32.add (local.get $rs) (i32.shl (local.get $j) (i32.const 2)))))
        (local.set $pe (i32.load (i32.add (local.get $rs) (i32.shl (i32.add (local.get $j) (i32.const 1)) (i32.const 2)))))
        (block $done_q (loop $loop_q
          (br_if $done_q (i32.ge_u (local.get $p) (local.get $pe)))
          (local.set $c (i32.load (i32.add (local.get $cols) (i32.shl (local.get $p) (i32.const 2)))))
          (local.set $o (i32.add (local.get $ti0) (i32.shl (local.get $c) (i32.const 3))))
          (local.set $ur (f64.load (i32.add (local.get $tr) (local.get $o))))
          (local.set $ui (f64.load (i32.add (local.get $ti) (local.get $o))))
          (local.set $o (i32.shl (i32.add (i32.mul (local.get $j) (local.get $r)) (local.get $c)) (i32.const 3)))
          (local.set $vr (f64.load (i32.add (local.get $br) (local.get $o))))
          (local.set $vi (f64.neg (f64.load (i32.add (local.get $bi) (local.get $o)))))
          (local.set $sr (f64.add (local.get $sr) (f64.sub (f64.mul (local.get $ur) (local.get $vr)) (f64.mul (local.get $ui) (local.get $vi)))))
          (local.set $si (f64.add (local.get $si) (f64.add (f64.mul (local.get $ur) (local.get $vi)) (f64.mul (local.get $ui) (local.get $vr)))))
          (local.set $p (i32.add (local.get $p) (i32.const 1)))
          (br $loop_q)))
        (if (i32.eq (local.get $i) (local.get $j)) (then (local.set $si (f64.const 0))))
        (local.set $o (i32.shl (i32.add (i32.mul (local.get $i) (local.get $d)) (local.get $j)) (i32.const 3)))
        (f64.store (i32.add (local.get $nr) (local.get $o)) (local.get $sr))
        (f64.store (i32.add (local.get $ni) (local.get $o)) (local.get $si))
        (local.set $o (i32.shl (i32.add (i32.mul (local.get $j) (local.get $d)) (local.get $i)) (i32.const 3)))
        (f64.store (i32.add (local.get $nr) (local.get $o)) (local.get $sr))
        (f64.store (i32.add (local.get $ni) (local.get $o)) (f64.neg (local.get $si)))
        (local.set $j (i32.add (local.get $j) (i32.const 1)))
        (br $loop_j)))
      (local.set $i (i32.add (local.get $i) (i32.const 1)))
      (br $loop_i2))))

  ;; out[k] = Σ_p (mr[k·np + p]·gr[p] − mi[k·np + p]·gi[p]) for k < ns ($np even; the caller pads with 0).
  (func (export "rowdots") (param $mr i32) (param $mi i32) (param $gr i32) (param $gi i32) (param $ns i32) (param $np i32) (param $out i32)
    (local $k i32) (local $p i32) (local $pe i32) (local $o i32) (local $acc v128)
    (local.set $k (i32.const 0))
    (block $done_k (loop $loop_k
      (br_if $done_k (i32.ge_u (local.get $k) (local.get $ns)))
      (local.set $acc (v128.const f64x2 0 0))
      (local.set $o (i32.shl (i32.mul (local.get $k) (local.get $np)) (i32.const 3)))
      (local.set $p (i32.const 0))
      (local.set $pe (i32.shl (local.get $np) (i32.const 3)))
      (block $done_p (loop $loop_p
        (br_if $done_p (i32.ge_u (local.get $p) (local.get $pe)))
        (local.set $acc (f64x2.add (local.get $acc)
          (f64x2.sub
            (f64x2.mul (v128.load (i32.add (local.get $mr) (i32.add (local.get $o) (local.get $p)))) (v128.load (i32.add (local.get $gr) (local.get $p))))
            (f64x2.mul (v128.load (i32.add (local.get $mi) (i32.add (local.get $o) (local.get $p)))) (v128.load (i32.add (local.get $gi) (local.get $p)))))))
        (local.set $p (i32.add (local.get $p) (i32.const 16)))
        (br $loop_p)))
      (f64.store (i32.add (local.get $out) (i32.shl (local.get $k) (i32.const 3)))
        (f64.add (f64x2.extract_lane 0 (local.get $acc)) (f64x2.extract_lane 1 (local.get $acc))))
      (local.set $k (i32.add (local.get $k) (i32.const 1)))
      (br $loop_k))))
)
