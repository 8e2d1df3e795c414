/* fuzz_target.h - the one entry point every fuzz harness in tests/fuzz defines (libFuzzer's).
 *
 * A harness is built twice: with clang and -fsanitize=fuzzer for fuzzing (tools/fuzz), and with the
 * normal compiler beside replay.c, whose main() feeds it every file of a seed corpus (ctest label
 * fuzz-replay). A harness returns 0 for every input; it stops the process (abort) only when the code
 * under test breaks its contract, e.g. a failure with an empty message.
 */
#ifndef SW_FUZZ_TARGET_H
#define SW_FUZZ_TARGET_H

#include <stddef.h>
#include <stdint.h>

/* Runs the code under test on size bytes at data (not NUL-terminated; may be empty). Frees everything
 * it takes before returning. Returns 0. */
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

#endif
