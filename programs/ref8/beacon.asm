; beacon.asm — the pier beacon sends the harbour's name in Morse.
;
; At dusk the beacon on the pier head flashes GULLHAVEN in International
; Morse code on the program lamps, with the standard timing: a dot lasts one
; unit, a dash three, the gap inside a letter one unit and between letters
; three. The code is also typed on the console. The calls nest four deep
; (send_letter -> flash -> wait -> the unit delay), every level saving what
; it needs on the stack. One unit is UNIT turns of a delay loop.
;
; Codes from ITU-R M.1677-1 (International Morse code), written from memory.
; Expected values: computed in Python from the same code table:
;   "G" takes 9 units; "GULLHAVEN" takes 85 units and 27 flashes.

LAMPS = 1
UNIT  = 40                  ; delay-loop turns per time unit
LIGHT = 0xFF                ; every lamp of the beacon

        li x, message
        call send_word
        halt
        .expect [units] == 85, [flashes] == 27, lamps == 0, sp == 0
        .expect out == "--. ..- .-.. .-.. .... .- ...- . -.\n"

; send_word: the capital letters at x up to the 0, gaps of three units
; between letters, a newline at the end.
send_word:
        ld r0, [x]
        inc x
        push r6                 ; the word pointer, while x walks a code
        push r7
        call send_letter
        pop r7
        pop r6
        ld r0, [first]
        cmp r0, 0
        jz send_word_more
        li r0, 0
        st [first], r0
        pause                   ; after the first letter only
        .expect [units] == 9, [flashes] == 3, out == "--.", lamps == 0
send_word_more:
        ld r0, [x]
        cmp r0, 0
        jz send_word_end
        li r0, ' '
        out CONSOLE, r0
        li r1, 3
        call wait
        jmp send_word
send_word_end:
        jmp newline

; send_letter: the letter in r0, from its code string, with one-unit gaps.
send_letter:
        sub r0, 'A'
        shl r0                  ; two bytes per table entry
        li x, codes
        add r7, r0
        adc r6, 0
        ld r0, [x]              ; x <- the code string of the letter
        inc x
        ld r1, [x]
        mov r7, r0
        mov r6, r1
        ld r0, [x]
send_letter_element:
        out CONSOLE, r0
        li r1, 1                ; a dot: one unit of light
        cmp r0, '.'
        jz send_letter_flash
        li r1, 3                ; a dash: three
send_letter_flash:
        call flash
        inc x
        ld r0, [x]
        cmp r0, 0
        jz send_letter_done
        li r1, 1
        call wait               ; the gap inside a letter
        ld r0, [x]
        jmp send_letter_element
send_letter_done:
        ret

; flash: the beacon on for r1 units, then off.
flash:
        li r2, LIGHT
        out LAMPS, r2
        ld r2, [flashes]
        inc r2
        st [flashes], r2
        call wait
        li r2, 0
        out LAMPS, r2
        ret

; wait: r1 units of time, added to [units]. Uses r1-r3.
wait:
        ld r2, [units]
        add r2, r1
        st [units], r2
wait_unit:
        call unit_delay
        dec r1
        jnz wait_unit
        ret

unit_delay:
        push r3
        li r3, UNIT
unit_delay_turn:
        dec r3
        jnz unit_delay_turn
        pop r3
        ret

message: .byte "GULLHAVEN", 0
first:   .byte 1
units:   .byte 0
flashes: .byte 0

codes:
        .word m_a, m_b, m_c, m_d, m_e, m_f, m_g, m_h, m_i, m_j, m_k, m_l, m_m
        .word m_n, m_o, m_p, m_q, m_r, m_s, m_t, m_u, m_v, m_w, m_x, m_y, m_z
m_a: .byte ".-", 0
m_b: .byte "-...", 0
m_c: .byte "-.-.", 0
m_d: .byte "-..", 0
m_e: .byte ".", 0
m_f: .byte "..-.", 0
m_g: .byte "--.", 0
m_h: .byte "....", 0
m_i: .byte "..", 0
m_j: .byte ".---", 0
m_k: .byte "-.-", 0
m_l: .byte ".-..", 0
m_m: .byte "--", 0
m_n: .byte "-.", 0
m_o: .byte "---", 0
m_p: .byte ".--.", 0
m_q: .byte "--.-", 0
m_r: .byte ".-.", 0
m_s: .byte "...", 0
m_t: .byte "-", 0
m_u: .byte "..-", 0
m_v: .byte "...-", 0
m_w: .byte ".--", 0
m_x: .byte "-..-", 0
m_y: .byte "-.--", 0
m_z: .byte "--..", 0

        .include "lib/math16.inc"
        .include "lib/print.inc"
