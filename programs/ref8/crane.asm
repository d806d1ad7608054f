; crane.asm — the pier crane asks its driver for a lift.
;
; Before each lift the crane driver keys two numbers into the panel toggles.
; The program prints a question and stops at a pause; the driver reads it,
; sets the toggles and presses RESUME. First the weight of one crate, in
; steps of 25 kg, then how many crates hang in the sling. The program prints
; the load in kilograms and whether the crane's safe working load of 2,000 kg
; allows the lift; the lamps show 1 for a lift allowed, 0x80 for one refused.
; crane.panel.toml answers the two pauses for `relaybench test` (toggles 18,
; RESUME; toggles 4, RESUME). By hand, in the debugger: 'go', 'toggles 18',
; 'resume', 'toggles 4', 'resume'.
;
; Expected values: computed in Python,
;   18 * 25 = 450 kg a crate; 450 * 4 = 1800 kg <= 2000 -> "LIFT", lamps == 1.

SWITCHES  = 0
LAMPS     = 1
STEP_KG   = 25
SAFE_LOAD = 2000
ALLOWED   = 1
REFUSED   = 0x80

        li x, ask_weight
        call print_str
        pause                   ; the driver keys in the weight of a crate
        .expect out == "CRATE WEIGHT IN 25 KG STEPS?\n", lamps == 0
        in r0, SWITCHES
        st [weight], r0
        li x, ask_crates
        call print_str
        pause                   ; ... and then the number of crates
        .expect [weight] == 18
        in r0, SWITCHES
        st [crates], r0

        ld r0, [weight]         ; A <- the kilograms of one crate
        li r1, 0
        li r2, STEP_KG
        li r3, 0
        call mul16
        ld r2, [crates]         ; A <- the whole load
        li r3, 0
        call mul16
        st [load], r0
        st [load + 1], r1
        li x, text_load
        call print_str
        ld r0, [load]
        ld r1, [load + 1]
        call print_u16

        li r2, ALLOWED
        li x, text_lift
        ld r0, [load]
        ld r1, [load + 1]
        sub r0, lo(SAFE_LOAD + 1)
        sbc r1, hi(SAFE_LOAD + 1)
        jc verdict              ; borrow: the load is within the safe load
        li r2, REFUSED
        li x, text_refused
verdict:
        out LAMPS, r2
        call print_str
        halt
        .expect [crates] == 4, [load] == lo(1800), [load + 1] == hi(1800), lamps == ALLOWED
        .expect out == "CRATE WEIGHT IN 25 KG STEPS?\nNUMBER OF CRATES?\nLOAD 1800 KG: LIFT\n"

ask_weight:   .byte "CRATE WEIGHT IN 25 KG STEPS?\n", 0
ask_crates:   .byte "NUMBER OF CRATES?\n", 0
text_load:    .byte "LOAD ", 0
text_lift:    .byte " KG: LIFT\n", 0
text_refused: .byte " KG: REFUSED, OVER THE SAFE LOAD\n", 0
weight:       .byte 0
crates:       .byte 0
load:         .word 0

        .include "lib/math16.inc"
        .include "lib/print.inc"
