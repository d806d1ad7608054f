; regatta.asm — drawing the first heat of the Gullhaven regatta.
;
; By the club's old custom, boats whose sail numbers are prime start in the
; first heat. Sail numbers run from 2 to 999. The program sieves them
; (the sieve of Eratosthenes over a 1000-byte table reached through x, with
; 16-bit addresses), prints the prime numbers from 900 up — this year's
; entries — and counts all primes; the lamps show how many start.
;
; Expected values: computed in Python with the same sieve and checked
; against the published count of primes below 1000 (168, a standard table
; value); primes >= 900: 907 911 919 929 937 941 947 953 967 971 977 983 991 997.

N      = 1000
FROM   = 900
SIEVE  = 0x1000             ; one byte per number: 1 when it has a factor
LAMPS  = 1

        li x, SIEVE             ; clear the table
clear:
        li r0, 0
        st [x], r0
        inc x
        call x_below_end
        jc clear

        li r4, 2                ; p, the next candidate factor
next_p:
        mov r0, r4              ; A <- p * p (mul16 keeps r4)
        li r1, 0
        mov r2, r4
        li r3, 0
        call mul16
        mov r2, r0              ; p * p >= N: every composite is marked
        sub r2, lo(N)
        mov r3, r1
        sbc r3, hi(N)
        jnc sieved
        li x, SIEVE
        add r7, r4
        adc r6, 0
        ld r2, [x]
        cmp r2, 0
        jnz skip_p              ; p has a factor: its multiples are marked already
        li x, SIEVE             ; x <- SIEVE + p * p
        add r7, r0
        adc r6, r1
mark:
        call x_below_end
        jnc skip_p
        li r2, 1
        st [x], r2
        add r7, r4              ; the next multiple of p
        adc r6, 0
        jmp mark
skip_p:
        inc r4
        jmp next_p
sieved:
        pause
        .expect r4 == 32, [SIEVE + 997] == 0, [SIEVE + 961] == 1, [SIEVE + 991] == 0, [SIEVE + 999] == 1

        li x, text_heat
        call print_str
        li x, SIEVE + 2
count:
        ld r0, [x]
        cmp r0, 0
        jnz count_next
        ld r0, [primes]
        inc r0
        st [primes], r0
        mov r0, r7              ; A <- the sail number, x - SIEVE
        mov r1, r6
        sub r0, lo(SIEVE)
        sbc r1, hi(SIEVE)
        mov r2, r0              ; below FROM: not this year's entry
        sub r2, lo(FROM)
        mov r3, r1
        sbc r3, hi(FROM)
        jc count_next
        ld r2, [heat]
        inc r2
        st [heat], r2
        out LAMPS, r2
        cmp r2, 1
        jz first_entry
        li r2, ' '
        out CONSOLE, r2
first_entry:
        call print_u16          ; keeps x
count_next:
        inc x
        call x_below_end
        jc count
        call newline
        ld r0, [primes]
        li r1, 0
        call print_u16
        li x, text_count
        call print_str
        halt
        .expect [primes] == 168, [heat] == 14, lamps == 14, sp == 0
        .expect out == "first heat: 907 911 919 929 937 941 947 953 967 971 977 983 991 997\n168 prime sail numbers below 1000\n"

; x_below_end: c = 1 while x < SIEVE + N. Uses r2, r3.
x_below_end:
        mov r2, r7
        sub r2, lo(SIEVE + N)
        mov r3, r6
        sbc r3, hi(SIEVE + N)
        ret

primes:     .byte 0
heat:       .byte 0
text_heat:  .byte "first heat: ", 0
text_count: .byte " prime sail numbers below 1000\n", 0

        .include "lib/math16.inc"
        .include "lib/print.inc"
