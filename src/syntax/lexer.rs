//! JSON lexer: splits the input into tokens that cover every byte.
