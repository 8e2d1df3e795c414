/* demo.h - the built-in fictional scenario (scenarios/demo.scn, embedded at build time). */
#ifndef SW_DEMO_H
#define SW_DEMO_H

extern const char sw_demo_scenario[];   /* NUL-terminated scenario text */

#endif
