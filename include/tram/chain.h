/*
 * tram/chain.h - kinematic chains: the flange pose from joint values,
 * computed the plain numerical way - one 4x4 transform per element,
 * multiplied along the chain, every intermediate frame available.
 *
 * A chain is: an optional fixed base offset, an ordered list of elements
 * (fixed transforms and joints), and an optional fixed tool/flange offset:
 *     T_base_flange(q) = B * E_1(q) * E_2(q) * ... * E_m(q) * T
 * A revolute joint about the unit axis a (in the current frame) with
 * reading r is exp(theta a) with theta = scale * r + offset; a prismatic
 * joint translates by (scale * r + offset) a.  The offset is the joint
 * value at zero reading.  The classical parameter tables are converted to
 * this form: Denavit-Hartenberg (1955), link = Rz(theta) Tz(d) Tx(a) Rx(alpha);
 * the modified convention of Craig (1986), link = Rx(alpha_prev) Tx(a_prev)
 * Rz(theta) Tz(d).  File format: docs/chain.md.
 *
 * Units: joint readings are in the chain's angle unit (revolute) or length
 * unit (prismatic); poses come out in the chain's length unit.
 */
#ifndef TRAM_CHAIN_H
#define TRAM_CHAIN_H

#include "tram/records.h"
#include "tram/se3.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum tram_chain_kind {
    TRAM_CHAIN_FIXED = 0,
    TRAM_CHAIN_REVOLUTE,
    TRAM_CHAIN_PRISMATIC
} tram_chain_kind;

typedef struct tram_chain_element {
    tram_chain_kind kind;
    tram_se3 T;         /* fixed: the transform (translation in the length unit) */
    double axis[3];     /* joint: unit axis in the element's input frame         */
    double offset;      /* joint value at zero reading (rad, or length)           */
    double scale;       /* encoder direction/scale: value = scale * reading + offset */
    int has_limits;
    double lo, hi;      /* limits on the reading, in the chain's units            */
    char name[32];      /* "joint_3", or the file's name                          */
} tram_chain_element;

typedef struct tram_chain {
    tram_length_unit length_unit;
    tram_angle_unit angle_unit;
    size_t n_elements, n_joints;
    tram_chain_element *elements; /* owned */
    char source[256];
} tram_chain;

/* Read a chain file (JSON; docs/chain.md).  Fixed rotations that are not
 * rotations, axes of zero length, missing units and unknown keys are
 * errors.  Caller frees *out with tram_chain_destroy. */
TRAM_API tram_status tram_chain_read_file(const char *path, tram_chain **out, tram_error *err);
TRAM_API tram_status tram_chain_read_buffer(const char *name, const char *data, size_t len,
                                            tram_chain **out, tram_error *err);
/* NULL is a no-op. */
TRAM_API void tram_chain_destroy(tram_chain *c);

/* Index of the first joint whose reading is outside its limits, or -1. */
TRAM_API int tram_chain_limit_violation(const tram_chain *c, const double *readings);

/* Forward kinematics.  readings: n_joints values in the chain's units.
 * frames (may be NULL): n_joints + 2 poses in the base frame - the base
 * (after the base offset is the first element's input), the frame after
 * each joint, and the flange. */
TRAM_API void tram_chain_forward(const tram_chain *c, const double *readings,
                                 tram_se3 *T_base_flange, tram_se3 *frames);

/* Geometric Jacobian of the flange pose, J (6 x n_joints, row-major): rows
 * 0-2 the linear velocity of the flange origin and rows 3-5 the angular
 * velocity, both in the base frame, per unit of joint value (rad for
 * revolute joints, length unit for prismatic ones; the encoder scale is
 * not included: multiply column j by scale_j for per-reading units). */
TRAM_API void tram_chain_jacobian(const tram_chain *c, const double *readings, double *J);

/* Turn the joint columns of a record set into T_base_flange with the chain
 * (converting the records' angle and length units to the chain's and the
 * result back to the records' length unit).  Errors name the station, the
 * joint and file:line:column: a joint-count mismatch, a reading outside
 * the limits. */
TRAM_API tram_status tram_records_apply_chain(tram_records *r, const tram_chain *c,
                                              tram_error *err);

/* Damped least-squares inverse kinematics (Wampler, IEEE T-SMC 16(1),
 * 1986; Nakamura & Hanafusa, J. Dyn. Sys. Meas. Control 108(3), 1986) on
 * the chain's geometric Jacobian: readings from q0 (chain units) toward
 * T_base_flange (chain length unit), kept inside the joint limits.
 * (ik.c).  Returns 1 when the pose is reached within tol_length and tol_rad (q
 * then holds the readings), else 0. */
TRAM_API int tram_chain_ik(const tram_chain *c, const tram_se3 *T_base_flange, const double *q0,
                           double tol_length, double tol_rad, double *q);

#ifdef __cplusplus
}
#endif
#endif
