#pragma once
// Noise weighting curves, as magnitudes |W(f)| (V/V) for a weighted band total
// integral of S(f) |W(f)|^2 df.
//
// A (IEC 61672-1, annex E): the analogue prototype
//   R_A(f) = f4^2 f^4 / ((f^2 + f1^2) sqrt((f^2 + f2^2)(f^2 + f3^2)) (f^2 + f4^2))
// with f1 = 20.598997 Hz, f2 = 107.65265 Hz, f3 = 737.86223 Hz, f4 = 12194.217 Hz,
// normalised here by R_A(1 kHz) so that W_A(1 kHz) = 1 exactly (the standard's
// +2.00 dB constant, rounded, does the same to 0.001 dB).
//
// ITU-R BS.468-4: the weighting network's response, written as
//   h1(f) = -4.737338981378384e-24 f^6 + 2.043828333606125e-15 f^4
//           - 1.363894795463638e-07 f^2 + 1
//   h2(f) =  1.306612257412824e-19 f^5 - 2.118150887518656e-11 f^3
//           + 5.559488023498642e-04 f
//   R(f)  =  1.246332637532143e-04 f / sqrt(h1^2 + h2^2)
// (a closed form that reproduces the standard's table, e.g. +12.2 dB at
// 6.3 kHz; the coefficients from memory, checked in tests against the table),
// normalised by R(1 kHz) so that W_468(1 kHz) = 1: the 468 curve proper,
// 0 dB at 1 kHz, not the 2 kHz-normalised variant used with average meters.
// Only the curve is applied: the standard's quasi-peak meter is not modelled,
// the weighted total is an rms figure.

#include "tacet/circuit/weighting.hpp"

namespace tacet {

/// |W_A(f)|, V/V; 0 at f = 0.
double a_weighting(double f);
/// |W_468(f)|, V/V; 0 at f = 0.
double itu468_weighting(double f);
/// |W(f)| of the named weighting; 1 for Weighting::none.
double weighting_gain(Weighting weighting, double f);
/// 20 log10 |W(f)|, dB.
double weighting_db(Weighting weighting, double f);

}  // namespace tacet
