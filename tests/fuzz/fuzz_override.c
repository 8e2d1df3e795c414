/* fuzz_override.c - fuzz harness: `--set` overrides applied to a scenario (sw_scenario_override).
 *
 * The base scenario is the built-in fictional demo (demo.h), parsed once. The input is up to
 * FUZZ_MAX_OVERRIDES lines "section.key=value", as `--set` takes them (a line without '=' has an
 * empty value). Each target is also read back with sw_scenario_value.
 */
#include <stdlib.h>
#include <string.h>

#include "fuzz_target.h"
#include "inputs/demo.h"
#include "inputs/scenario.h"

#define FUZZ_MAX_TEXT (16u * 1024u)   /* longer inputs are cut */
#define FUZZ_MAX_OVERRIDES 8

static sw_scenario *base;   /* parsed once; freed at exit */

static void free_base(void)
{
    sw_scenario_free(base);
    free(base);
    base = NULL;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (!base) {
        base = malloc(sizeof *base);
        sw_error err = {0};
        if (!base || sw_scenario_parse(sw_demo_scenario, "demo.scn", "fuzz-no-such-folder", base, &err) != SW_OK)
            abort();   /* the demo must parse */
        atexit(free_base);
    }
    if (size > FUZZ_MAX_TEXT)
        size = FUZZ_MAX_TEXT;
    char *text = malloc(size + 1);
    sw_scenario *out = malloc(sizeof *out);
    if (!text || !out) {
        free(text);
        free(out);
        return 0;
    }
    memcpy(text, data, size);
    text[size] = '\0';
    sw_override ov[FUZZ_MAX_OVERRIDES];
    size_t n = 0;
    char *line = text;
    while (line && n < FUZZ_MAX_OVERRIDES) {
        char *next = strchr(line, '\n');
        if (next)
            *next++ = '\0';
        char *eq = strchr(line, '=');
        if (eq)
            *eq++ = '\0';
        ov[n].target = line;
        ov[n].value = eq ? eq : "";
        n++;
        line = next;
    }
    for (size_t k = 0; k < n; k++) {
        double v;
        sw_error verr = {0};
        if (sw_scenario_value(base, ov[k].target, &v, &verr) != SW_OK && !verr.msg[0])
            abort();
    }
    sw_error err = {0};
    if (sw_scenario_override(base, ov, n, out, &err) == SW_OK)
        sw_scenario_free(out);
    else if (!err.msg[0])
        abort();   /* contract: a failure names its cause */
    free(out);
    free(text);
    return 0;
}
