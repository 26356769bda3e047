//! The HTTP API end to end: one test binary, a fresh server and database per
//! test (see `helpers::spawn_app`).

mod contract;
mod helpers;

mod assessments;
mod clients;
mod compare;
mod compute;
mod edges;
mod errors;
mod evaluate;
mod exchange;
mod isolation;
mod keys;
mod migrations;
mod openapi;
mod persistence;
mod reports;
mod search;
mod sites;
mod stored_results;
mod strict;
mod surveys;
mod tables;
mod tls;
mod warnings;
mod whatif;
