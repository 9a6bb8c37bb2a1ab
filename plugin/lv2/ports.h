/*
  plumb LV2: port indices. This enum mirrors lv2:index in ttl/plumb.ttl
  one for one; change both together (docs/ports.md describes each).
*/
#ifndef PLUMB_LV2_PORTS_H
#define PLUMB_LV2_PORTS_H

typedef enum {
  PORT_IN = 0,       /* audio in */
  PORT_OUT,          /* audio out: a bit-exact copy of in */
  PORT_CONTROL,      /* atom in: time:Position, patch:Set, patch:Get */
  PORT_NOTIFY,       /* atom out: patch replies and note objects */
  PORT_REFERENCE,    /* A4 in Hz */
  PORT_TOLERANCE,    /* cents */
  PORT_TEMPERAMENT,  /* enumeration, plumb_temperament order */
  PORT_TONIC,        /* pitch class 0 = C .. 11 = B */
  PORT_LOWEST,       /* MIDI note */
  PORT_HIGHEST,      /* MIDI note */
  PORT_MIN_NOTE,     /* ms */
  PORT_LOGGING,      /* toggled */
  PORT_NOTE,         /* out: MIDI number of the current note, -1 none */
  PORT_CENTS,        /* out: live cents */
  PORT_CONFIDENCE,   /* out: 0..1 */
  PORT_LAST_CENTS,   /* out: the last completed note's cents */
  PORT_LAST_VERDICT, /* out: -1 none, else plumb_verdict */
  PORT_LAST_B,       /* out: the last note's inharmonicity B */
  PORT_NOTES,        /* out: notes completed since activation */
  PORT_FLAGGED,      /* out: of which flagged */
  PORT_LOG_OK,       /* out: 1 log fine, 0 log error */
  PORT_LATENCY,      /* out: lv2:latency, always 0 */
  PORT_LAST_HNR,     /* out: the last note's harmonic-to-noise ratio, dB */
  PORT_LAST_ODD_EVEN, /* out: the last note's odd/even balance, dB */
  PORT_LAST_ATTACK,  /* out: the last note's attack time, ms */
  PORT_COUNT
} plumb_port;

#endif /* PLUMB_LV2_PORTS_H */
