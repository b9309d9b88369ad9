// The Catch2 entry point, compiled once for the whole suite.
#define CATCH_CONFIG_MAIN
#include <catch2/catch.hpp>
