;; Nearest neighbours of 256-bit binary descriptors under Hamming distance, by brute force with
;; WebAssembly SIMD (i8x16.popcnt): for every descriptor of a, the index of its nearest descriptor
;; in b and the best and second-best distances; for every descriptor of b, the distance of its
;; nearest descriptor in a and that descriptor's index. Ties keep the earlier index, as the
;; TypeScript loop in match.ts does. Descriptors are 32 bytes each, contiguous; outputs are i32.
;; Compiled into nearest-hamming-wasm.ts by scripts/build-wasm.ts (npm run build:wasm).
(module
  (memory (export "memory") 1)
  (func (export "nearest")
    (param $na i32) (param $nb i32) (param $pa i32) (param $pb i32)
    (param $pBest i32) (param $pBestD i32) (param $pSecond i32) (param $pBestOfB i32) (param $pBestDOfB i32)
    (local $i i32) (local $j i32) (local $q i32) (local $d i32) (local $b1 i32) (local $b2 i32) (local $bi i32) (local $ob i32)
    (local $a0 v128) (local $a1 v128) (local $x v128)
    (local.set $j (i32.const 0))
    (block $inited (loop $init
      (br_if $inited (i32.ge_u (local.get $j) (local.get $nb)))
      (i32.store (i32.add (local.get $pBestDOfB) (i32.shl (local.get $j) (i32.const 2))) (i32.const 0xffff))
      (i32.store (i32.add (local.get $pBestOfB) (i32.shl (local.get $j) (i32.const 2))) (i32.const -1))
      (local.set $j (i32.add (local.get $j) (i32.const 1)))
      (br $init)))
    (local.set $i (i32.const 0))
    (block $endA (loop $loopA
      (br_if $endA (i32.ge_u (local.get $i) (local.get $na)))
      (local.set $a0 (v128.load (i32.add (local.get $pa) (i32.shl (local.get $i) (i32.const 5)))))
      (local.set $a1 (v128.load offset=16 (i32.add (local.get $pa) (i32.shl (local.get $i) (i32.const 5)))))
      (local.set $b1 (i32.const 0xffff))
      (local.set $b2 (i32.const 0xffff))
      (local.set $bi (i32.const -1))
      (local.set $j (i32.const 0))
      (local.set $q (local.get $pb))
      (block $endB (loop $loopB
        (br_if $endB (i32.ge_u (local.get $j) (local.get $nb)))
        (local.set $x (i8x16.add
          (i8x16.popcnt (v128.xor (local.get $a0) (v128.load (local.get $q))))
          (i8x16.popcnt (v128.xor (local.get $a1) (v128.load offset=16 (local.get $q))))))
        (local.set $x (i32x4.extadd_pairwise_i16x8_u (i16x8.extadd_pairwise_i8x16_u (local.get $x))))
        (local.set $d (i32.add
          (i32.add (i32x4.extract_lane 0 (local.get $x)) (i32x4.extract_lane 1 (local.get $x)))
          (i32.add (i32x4.extract_lane 2 (local.get $x)) (i32x4.extract_lane 3 (local.get $x)))))
        (if (i32.lt_u (local.get $d) (local.get $b2))
          (then
            (if (i32.lt_u (local.get $d) (local.get $b1))
              (then (local.set $b2 (local.get $b1)) (local.set $b1 (local.get $d)) (local.set $bi (local.get $j)))
              (else (local.set $b2 (local.get $d))))))
        (local.set $ob (i32.add (local.get $pBestDOfB) (i32.shl (local.get $j) (i32.const 2))))
        (if (i32.lt_u (local.get $d) (i32.load (local.get $ob)))
          (then
            (i32.store (local.get $ob) (local.get $d))
            (i32.store (i32.add (local.get $pBestOfB) (i32.shl (local.get $j) (i32.const 2))) (local.get $i))))
        (local.set $q (i32.add (local.get $q) (i32.const 32)))
        (local.set $j (i32.add (local.get $j) (i32.const 1)))
        (br $loopB)))
      (i32.store (i32.add (local.get $pBest) (i32.shl (local.get $i) (i32.const 2))) (local.get $bi))
      (i32.store (i32.add (local.get $pBestD) (i32.shl (local.get $i) (i32.const 2))) (local.get $b1))
      (i32.store (i32.add (local.get $pSecond) (i32.shl (local.get $i) (i32.const 2))) (local.get $b2))
      (local.set $i (i32.add (local.get $i) (i32.const 1)))
      (br $loopA))))
)
