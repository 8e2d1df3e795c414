/* fuzz_scenario.c - fuzz harness: scenario text -> sw_scenario (sw_scenario_parse, scenario.h).
 *
 * The input is the scenario text itself. Parsing reads no other file: relative paths resolve against
 * a folder that does not exist, and nothing is built from the result. A success is also read back
 * through sw_scenario_value for a few keys every scenario may have.
 */
#include <stdlib.h>
#include <string.h>

#include "fuzz_target.h"
#include "inputs/scenario.h"

#define FUZZ_MAX_TEXT (256u * 1024u)   /* longer inputs are cut: a scenario is a few kB */

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size > FUZZ_MAX_TEXT)
        size = FUZZ_MAX_TEXT;
    char *text = malloc(size + 1);
    sw_scenario *sc = malloc(sizeof *sc);   /* large (fixed arrays): not on the stack */
    if (!text || !sc) {
        free(text);
        free(sc);
        return 0;
    }
    memcpy(text, data, size);
    text[size] = '\0';
    sw_error err = {0};
    sw_status st = sw_scenario_parse(text, "fuzz.scn", "fuzz-no-such-folder", sc, &err);
    if (st != SW_OK) {
        if (!err.msg[0])
            abort();   /* contract: a failure names its cause */
    } else {
        static const char *const keys[] = {"run.duration", "run.courant", "grid.dx", "grid.nx", "run.layout"};
        for (size_t k = 0; k < sizeof keys / sizeof keys[0]; k++) {
            double v;
            sw_error verr = {0};
            (void)sw_scenario_value(sc, keys[k], &v, &verr);
        }
        sw_scenario_free(sc);
    }
    free(sc);
    free(text);
    return 0;
}
