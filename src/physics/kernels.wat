;; Spinyard's table-sum kernels in WebAssembly with 128-bit SIMD (two doubles per lane pair).
;; The same arithmetic as the JavaScript of src/physics/trig.ts (expNegI) and src/engine/spectral.ts
;; (pair sums); scripts/build-wasm.mjs assembles this file into src/physics/kernels-wasm.ts, and
;; test/physics/kernels.test.ts checks both paths against each other.
;; All offsets are byte offsets into the one exported memory; every length that is looped over two at
;; a time (n speeds, r levels) is even (the caller pads).
(module
  (memory (export "memory") 1)

  ;; z[a·n + k] = e^{−i mu[a]/speed[k]} for a < r, k < n, as zr (cos) and zi (−sin).
  ;; Reduction by quadrant with π/2 in three parts (fdlibm's split), Taylor polynomials on |t| ≤ π/4 in
  ;; Estrin's scheme; valid for |phase| < 3e9 (the caller checks).
  (func (export "phases") (param $mu i32) (param $r i32) (param $sp i32) (param $n i32) (param $zr i32) (param $zi i32)
    (local $a i32) (local $k i32) (local $o i32) (local $m v128)
    (local $x v128) (local $kq v128) (local $t v128) (local $z v128) (local $z2 v128) (local $z4 v128)
    (local $s v128) (local $c v128) (local $q v128) (local $odd v128) (local $even v128) (local $sign v128)
    (local.set $a (i32.const 0))
    (block $done_a (loop $loop_a
      (br_if $done_a (i32.ge_u (local.get $a) (local.get $r)))
      (local.set $m (f64x2.splat (f64.load (i32.add (local.get $mu) (i32.shl (local.get $a) (i32.const 3))))))
      (local.set $k (i32.const 0))
      (block $done_k (loop $loop_k
        (br_if $done_k (i32.ge_u (local.get $k) (local.get $n)))
        (local.set $x (f64x2.div (local.get $m) (v128.load (i32.add (local.get $sp) (i32.shl (local.get $k) (i32.const 3))))))
        (local.set $kq (f64x2.nearest (f64x2.mul (local.get $x) (f64x2.splat (f64.const 0.6366197723675814)))))
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
        ;; s = t + t·z·((S1 + z S2) + z2 (S3 + z S4) + z4 ((S5 + z S6) + z2 (S7 + z S8)))
        (local.set $s
          (f64x2.add (local.get $t)
            (f64x2.mul (f64x2.mul (local.get $t) (local.get $z))
              (f64x2.add
                (f64x2.add
                  (f64x2.add (f64x2.splat (f64.const -0.16666666666666666)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const 0.008333333333333333))))
                  (f64x2.mul (local.get $z2)
                    (f64x2.add (f64x2.splat (f64.const -0.0001984126984126984)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const 0.0000027557319223985893))))))
                (f64x2.mul (local.get $z4)
                  (f64x2.add
                    (f64x2.add (f64x2.splat (f64.const -2.505210838544172e-8)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const 1.6059043836821613e-10))))
                    (f64x2.mul (local.get $z2)
                      (f64x2.add (f64x2.splat (f64.const -7.647163731819816e-13)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const 2.8114572543455206e-15)))))))))))
        ;; c = 1 + z·((C1 + z C2) + z2 (C3 + z C4) + z4 ((C5 + z C6) + z2 (C7 + z C8)))
        (local.set $c
          (f64x2.add (f64x2.splat (f64.const 1))
            (f64x2.mul (local.get $z)
              (f64x2.add
                (f64x2.add
                  (f64x2.add (f64x2.splat (f64.const -0.5)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const 0.041666666666666664))))
                  (f64x2.mul (local.get $z2)
                    (f64x2.add (f64x2.splat (f64.const -0.001388888888888889)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const 0.0000248015873015873))))))
                (f64x2.mul (local.get $z4)
                  (f64x2.add
                    (f64x2.add (f64x2.splat (f64.const -2.755731922398589e-7)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const 2.08767569878681e-9))))
                    (f64x2.mul (local.get $z2)
                      (f64x2.add (f64x2.splat (f64.const -1.1470745597729725e-11)) (f64x2.mul (local.get $z) (f64x2.splat (f64.const 4.779477332387385e-14)))))))))))
        ;; quadrant q = kq mod 4 (two's complement): cos(t + qπ/2) and sin(t + qπ/2)
        (local.set $q (i32x4.trunc_sat_f64x2_s_zero (local.get $kq)))
        (local.set $odd (f64x2.convert_low_i32x4_s (v128.and (local.get $q) (i32x4.splat (i32.const 1)))))
        (local.set $even (f64x2.sub (f64x2.splat (f64.const 1)) (local.get $odd)))
        (local.set $sign (f64x2.sub (f64x2.splat (f64.const 1)) (f64x2.convert_low_i32x4_s (v128.and (local.get $q) (i32x4.splat (i32.const 2))))))
        (local.set $o (i32.shl (i32.add (i32.mul (local.get $a) (local.get $n)) (local.get $k)) (i32.const 3)))
        (v128.store (i32.add (local.get $zr) (local.get $o))
          (f64x2.mul (local.get $sign) (f64x2.sub (f64x2.mul (local.get $even) (local.get $c)) (f64x2.mul (local.get $odd) (local.get $s)))))
        (v128.store (i32.add (local.get $zi) (local.get $o))
          (f64x2.neg (f64x2.mul (local.get $sign) (f64x2.add (f64x2.mul (local.get $even) (local.get $s)) (f64x2.mul (local.get $odd) (local.get $c))))))
        (local.set $k (i32.add (local.get $k) (i32.const 2)))
        (br $loop_k)))
      (local.set $a (i32.add (local.get $a) (i32.const 1)))
      (br $loop_a))))

  ;; y[a·n + k] = e[k] · z[a·n + k] (complex), for a < r, k < n.
  (func (export "scale") (param $er i32) (param $ei i32) (param $zr i32) (param $zi i32) (param $yr i32) (param $yi i32) (param $n i32) (param $r i32)
    (local $a i32) (local $k i32) (local $o i32) (local $pr v128) (local $pi v128) (local $vr v128) (local $vi v128)
    (local.set $a (i32.const 0))
    (block $done_a (loop $loop_a
      (br_if $done_a (i32.ge_u (local.get $a) (local.get $r)))
      (local.set $k (i32.const 0))
      (block $done_k (loop $loop_k
        (br_if $done_k (i32.ge_u (local.get $k) (local.get $n)))
        (local.set $pr (v128.load (i32.add (local.get $er) (i32.shl (local.get $k) (i32.const 3)))))
        (local.set $pi (v128.load (i32.add (local.get $ei) (i32.shl (local.get $k) (i32.const 3)))))
        (local.set $o (i32.shl (i32.add (i32.mul (local.get $a) (local.get $n)) (local.get $k)) (i32.const 3)))
        (local.set $vr (v128.load (i32.add (local.get $zr) (local.get $o))))
        (local.set $vi (v128.load (i32.add (local.get $zi) (local.get $o))))
        (v128.store (i32.add (local.get $yr) (local.get $o))
          (f64x2.sub (f64x2.mul (local.get $pr) (local.get $vr)) (f64x2.mul (local.get $pi) (local.get $vi))))
        (v128.store (i32.add (local.get $yi) (local.get $o))
          (f64x2.add (f64x2.mul (local.get $pr) (local.get $vi)) (f64x2.mul (local.get $pi) (local.get $vr))))
        (local.set $k (i32.add (local.get $k) (i32.const 2)))
        (br $loop_k)))
      (local.set $a (i32.add (local.get $a) (i32.const 1)))
      (br $loop_a))))

  ;; S_ab = Σ_k y_a(k) conj(z_b(k)) in 2×2 blocks of (a, b); a block is summed when any of its four
  ;; bytes of todo (r×r, row-major) is set, and all four entries of S (complex, interleaved) are written.
  (func (export "pairs") (param $yr i32) (param $yi i32) (param $zr i32) (param $zi i32) (param $n i32) (param $r i32) (param $todo i32) (param $S i32)
    (local $a i32) (local $b i32) (local $k i32) (local $i i32) (local $q i32)
    (local $oa i32) (local $oa1 i32) (local $ob i32) (local $ob1 i32) (local $kk i32)
    (local $a0r v128) (local $a0i v128) (local $a1r v128) (local $a1i v128)
    (local $b0r v128) (local $b0i v128) (local $b1r v128) (local $b1i v128)
    (local $p00r v128) (local $p00i v128) (local $p01r v128) (local $p01i v128)
    (local $p10r v128) (local $p10i v128) (local $p11r v128) (local $p11i v128)
    (local.set $a (i32.const 0))
    (block $done_a (loop $loop_a
      (br_if $done_a (i32.ge_u (local.get $a) (local.get $r)))
      (local.set $oa (i32.shl (i32.mul (local.get $a) (local.get $n)) (i32.const 3)))
      (local.set $oa1 (i32.add (local.get $oa) (i32.shl (local.get $n) (i32.const 3))))
      (local.set $b (i32.const 0))
      (block $done_b (loop $loop_b
        (br_if $done_b (i32.ge_u (local.get $b) (local.get $r)))
        (local.set $i (i32.add (i32.mul (local.get $a) (local.get $r)) (local.get $b)))
        (if (i32.or
              (i32.or (i32.load8_u (i32.add (local.get $todo) (local.get $i))) (i32.load8_u offset=1 (i32.add (local.get $todo) (local.get $i))))
              (i32.or (i32.load8_u (i32.add (local.get $todo) (i32.add (local.get $i) (local.get $r))))
                      (i32.load8_u offset=1 (i32.add (local.get $todo) (i32.add (local.get $i) (local.get $r))))))
          (then
            (local.set $ob (i32.shl (i32.mul (local.get $b) (local.get $n)) (i32.const 3)))
            (local.set $ob1 (i32.add (local.get $ob) (i32.shl (local.get $n) (i32.const 3))))
            (local.set $p00r (v128.const f64x2 0 0)) (local.set $p00i (v128.const f64x2 0 0))
            (local.set $p01r (v128.const f64x2 0 0)) (local.set $p01i (v128.const f64x2 0 0))
            (local.set $p10r (v128.const f64x2 0 0)) (local.set $p10i (v128.const f64x2 0 0))
            (local.set $p11r (v128.const f64x2 0 0)) (local.set $p11i (v128.const f64x2 0 0))
            (local.set $k (i32.const 0))
            (block $done_k (loop $loop_k
              (br_if $done_k (i32.ge_u (local.get $k) (local.get $n)))
              (local.set $kk (i32.shl (local.get $k) (i32.const 3)))
              (local.set $a0r (v128.load (i32.add (local.get $yr) (i32.add (local.get $oa) (local.get $kk)))))
              (local.set $a0i (v128.load (i32.add (local.get $yi) (i32.add (local.get $oa) (local.get $kk)))))
              (local.set $a1r (v128.load (i32.add (local.get $yr) (i32.add (local.get $oa1) (local.get $kk)))))
              (local.set $a1i (v128.load (i32.add (local.get $yi) (i32.add (local.get $oa1) (local.get $kk)))))
              (local.set $b0r (v128.load (i32.add (local.get $zr) (i32.add (local.get $ob) (local.get $kk)))))
              (local.set $b0i (v128.load (i32.add (local.get $zi) (i32.add (local.get $ob) (local.get $kk)))))
              (local.set $b1r (v128.load (i32.add (local.get $zr) (i32.add (local.get $ob1) (local.get $kk)))))
              (local.set $b1i (v128.load (i32.add (local.get $zi) (i32.add (local.get $ob1) (local.get $kk)))))
              ;; p += a·conj(b): re += ar br + ai bi, im += ai br − ar bi
              (local.set $p00r (f64x2.add (local.get $p00r) (f64x2.add (f64x2.mul (local.get $a0r) (local.get $b0r)) (f64x2.mul (local.get $a0i) (local.get $b0i)))))
              (local.set $p00i (f64x2.add (local.get $p00i) (f64x2.sub (f64x2.mul (local.get $a0i) (local.get $b0r)) (f64x2.mul (local.get $a0r) (local.get $b0i)))))
              (local.set $p01r (f64x2.add (local.get $p01r) (f64x2.add (f64x2.mul (local.get $a0r) (local.get $b1r)) (f64x2.mul (local.get $a0i) (local.get $b1i)))))
              (local.set $p01i (f64x2.add (local.get $p01i) (f64x2.sub (f64x2.mul (local.get $a0i) (local.get $b1r)) (f64x2.mul (local.get $a0r) (local.get $b1i)))))
              (local.set $p10r (f64x2.add (local.get $p10r) (f64x2.add (f64x2.mul (local.get $a1r) (local.get $b0r)) (f64x2.mul (local.get $a1i) (local.get $b0i)))))
              (local.set $p10i (f64x2.add (local.get $p10i) (f64x2.sub (f64x2.mul (local.get $a1i) (local.get $b0r)) (f64x2.mul (local.get $a1r) (local.get $b0i)))))
              (local.set $p11r (f64x2.add (local.get $p11r) (f64x2.add (f64x2.mul (local.get $a1r) (local.get $b1r)) (f64x2.mul (local.get $a1i) (local.get $b1i)))))
              (local.set $p11i (f64x2.add (local.get $p11i) (f64x2.sub (f64x2.mul (local.get $a1i) (local.get $b1r)) (f64x2.mul (local.get $a1r) (local.get $b1i)))))
              (local.set $k (i32.add (local.get $k) (i32.const 2)))
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
            (f64.store offset=24 (local.get $q) (f64.add (f64x2.extract_lane 0 (local.get $p11i)) (f64x2.extract_lane 1 (local.get $p11i))))))
        (local.set $b (i32.add (local.get $b) (i32.const 2)))
        (br $loop_b)))
      (local.set $a (i32.add (local.get $a) (i32.const 2)))
      (br $loop_a))))
)
