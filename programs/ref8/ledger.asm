; ledger.asm — the overnight check of the ferry company's ledger tape.
;
; Every night the relay machine reads the whole punched ledger (here made up
; by a simple generator: 60 KiB of bytes s, s' = 5s + 17 mod 256, from 42)
; and computes its CRC-32, which the clerk compares with the figure written
; in the day book. Before that it proves its own CRC routine on the
; standard check string "123456789". This is the long one: well over ten
; million cycles, about four weeks of the real machine at 5 Hz.
;
; CRC-32 as in ISO/IEC 8802-3 (Ethernet) and zlib: reflected polynomial
; 0xEDB88320, initial value and final XOR 0xFFFFFFFF. Expected values:
; the catalogue check value CRC-32("123456789") = 0xCBF43926 (from memory,
; and confirmed with Python's zlib.crc32), and zlib.crc32 of the generated
; ledger = 0xFA0FEDB3, recomputed by tests/test_programs.py.

LEDGER = 0x0800
END    = 0xF800             ; the ledger fills LEDGER … END - 1
SEED   = 42

        li x, check_string
        li r4, 9
        call crc32
        pause
        .expect r3 == 0xCB, r2 == 0xF4, r1 == 0x39, r0 == 0x26

        li x, LEDGER            ; punch the ledger
        li r0, SEED
fill:
        st [x], r0
        mov r1, r0              ; s <- 5 s + 17
        shl r0
        shl r0
        add r0, r1
        add r0, 17
        inc x
        cmp r6, hi(END)
        jnz fill
        pause
        .expect [LEDGER] == 42, [LEDGER + 1] == 0xE3, [END - 1] == 5

        li x, LEDGER            ; and read it back through the CRC
        li r4, 0                ; 0 means 256 bytes a turn
        li r5, (END - LEDGER) / 256
        call crc32_start
ledger_page:
        call crc32_more
        dec r5
        jnz ledger_page
        call crc32_finish
        st [crc], r0
        st [crc + 1], r1
        st [crc + 2], r2
        st [crc + 3], r3
        push r0
        push r1
        push r2
        li x, text_crc
        call print_str
        pop r2
        pop r1
        pop r0
        call print_hex32
        call newline
        halt
        .expect [crc + 3] == 0xFA, [crc + 2] == 0x0F, [crc + 1] == 0xED, [crc] == 0xB3
        .expect out == "ledger CRC-32 FA0FEDB3\n", sp == 0

; crc32: the CRC-32 of r4 bytes at x (r4 = 0: 256) into r3:r2:r1:r0.
; For longer data: crc32_start, then crc32_more for each piece, then
; crc32_finish (the final XOR). x ends past the bytes. Uses r0-r4, r5 kept.
crc32:
        call crc32_start
        call crc32_more
crc32_finish:
        not r0
        not r1
        not r2
        not r3
        ret
crc32_start:
        li r0, 0xFF
        li r1, 0xFF
        li r2, 0xFF
        li r3, 0xFF
        ret
crc32_more:
        push r5
crc32_byte:
        ld r5, [x]
        xor r0, r5
        inc x
        li r5, 8
crc32_bit:
        shr r3
        ror r2
        ror r1
        ror r0                  ; c <- the bit shifted out
        jnc crc32_next
        xor r3, 0xED
        xor r2, 0xB8
        xor r1, 0x83
        xor r0, 0x20
crc32_next:
        dec r5
        jnz crc32_bit
        dec r4
        jnz crc32_byte
        pop r5
        ret

; print_hex32: r3:r2:r1:r0 as eight hex digits. Uses r0-r4.
print_hex32:
        push r0
        push r1
        push r2
        mov r4, r3
        call print_hex8
        pop r4
        call print_hex8
        pop r4
        call print_hex8
        pop r4
        jmp print_hex8

; print_hex8: r4 as two hex digits. Uses r0, r4.
print_hex8:
        mov r0, r4
        shr r0
        shr r0
        shr r0
        shr r0
        call print_nibble
        mov r0, r4
        and r0, 0x0F
print_nibble:
        cmp r0, 10
        jc print_nibble_digit
        add r0, 'A' - 10 - '0'
print_nibble_digit:
        add r0, '0'
        out CONSOLE, r0
        ret

check_string: .byte "123456789"
text_crc:     .byte "ledger CRC-32 ", 0
crc:          .byte 0, 0, 0, 0   ; the ledger's CRC, low byte first

        .include "lib/math16.inc"
        .include "lib/print.inc"
