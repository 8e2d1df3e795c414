/* bench_reference.h - the pre-stepper C-layout step, for bench's side-by-side ratio only (see .c). */
#ifndef SW_BENCH_REFERENCE_H
#define SW_BENCH_REFERENCE_H

typedef struct sw_model sw_model;

/* One step of a C-layout model without terms and periodic edges, as before the stepper, in the model's
 * precision's copy: call as sw_model_step (from every thread of a parallel region, or outside one),
 * with subnormals flushed by the caller. The observer, if any, sees every row. */
void sw_bench_reference_c_step_f64(sw_model *m);
void sw_bench_reference_c_step_f32(sw_model *m);

#endif
