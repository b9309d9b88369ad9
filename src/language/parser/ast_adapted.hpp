#pragma once
// Fusion views of the syntax-tree structs, so X3 can fill them member by member.
// Only nodes with two or more members are adapted; the single-member ones
// (Identifier, Title, Include) are filled by semantic actions in
// parser_def.hpp, because X3 handles one-element fusion sequences unreliably.

#include <boost/fusion/include/adapt_struct.hpp>

#include "tacet/language/ast.hpp"

BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Quantity, digits, suffix)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Call, function, args)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Unary, op, operand)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Operation, op, operand)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Chain, first, rest)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Terminal, polarity, node)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Connections, first, second)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Option, key, value)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Ambient, value, high)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Supply, high, low, options)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Param, name, value)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Instance, keyword, name, connections, value, options)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::ModelEntry, key, value)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Model, name, kind, entries)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Block, name, ports, parameters, body)
BOOST_FUSION_ADAPT_STRUCT(tacet::ast::Spec, name, kind, probe, options)
