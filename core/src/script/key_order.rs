//! The order in which a recipe writes the keys of its map literals, so that table columns
//! come out in the recipe's order although Rhai keeps map keys sorted.
//!
//! Rhai's object maps are sorted by key at run time; the order a recipe wrote them in is
//! only in the parsed script. Before a script runs, the host collects the key order of
//! every map literal in it (`#{output_voltage: …, output_current: …}`). When a map becomes
//! a table row, or `grid` combines axes, a map whose set of keys equals a literal's takes
//! that literal's order. A map built key by key (`m.x = …`), or whose keys match no
//! literal, keeps the sorted order; `select([...])` sets any order explicitly.

use rhai::{Map, AST};
use std::collections::HashMap;

/// Most key orders kept per host (the prompt adds every line's literals).
const MAX_ORDERS: usize = 10_000;

/// Key orders of map literals, looked up by their sorted set of keys.
#[derive(Clone, Debug, Default)]
pub struct KeyOrders {
    by_keys: HashMap<Vec<String>, Vec<String>>,
}

impl KeyOrders {
    /// Adds the key order of every map literal in `source`, parsed without constant
    /// folding (which would turn a literal map into a sorted constant); falls back to `ast`
    /// when that parse fails. The first literal with a given set of keys wins.
    pub fn learn(&mut self, source: &str, ast: &AST, max_expr_depth: usize) {
        let mut raw = rhai::Engine::new_raw();
        raw.set_optimization_level(rhai::OptimizationLevel::None);
        raw.set_max_expr_depths(max_expr_depth, max_expr_depth);
        match raw.compile(source) {
            Ok(unfolded) => self.learn_ast(&unfolded),
            Err(_) => self.learn_ast(ast),
        }
    }

    fn learn_ast(&mut self, ast: &AST) {
        ast.walk(&mut |path| {
            if let Some(rhai::ASTNode::Expr(rhai::Expr::Map(m, _))) = path.last() {
                let order: Vec<String> = m.0.iter().map(|(k, _)| k.name.to_string()).collect();
                let mut keys = order.clone();
                keys.sort();
                keys.dedup();
                if keys.len() == order.len() && self.by_keys.len() < MAX_ORDERS {
                    self.by_keys.entry(keys).or_insert(order);
                }
            }
            true
        });
    }

    /// The keys of `map` in the order a literal wrote them, or sorted when none matches.
    pub fn keys_of<'m>(&self, map: &'m Map) -> Vec<&'m str> {
        let sorted: Vec<&str> = map.keys().map(|k| k.as_str()).collect();
        let key: Vec<String> = sorted.iter().map(|k| k.to_string()).collect();
        match self.by_keys.get(&key) {
            Some(order) => order
                .iter()
                .filter_map(|k| map.get_key_value(k.as_str()).map(|(k, _)| k.as_str()))
                .collect(),
            None => sorted,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_literal_sets_the_order_of_maps_with_its_keys_issue_10() {
        let engine = rhai::Engine::new_raw();
        let src = "let m = #{zeta: 1, alpha: 2, mid: 3}; let n = #{b: 1}; n.a = 2; m";
        let ast = engine.compile(src).unwrap();
        let mut k = KeyOrders::default();
        k.learn(src, &ast, 64);
        let m: Map = engine.eval_ast(&ast).unwrap();
        assert_eq!(k.keys_of(&m), ["zeta", "alpha", "mid"]);
        // a map built key by key keeps the sorted order
        let mut n = Map::new();
        n.insert("b".into(), 1.into());
        n.insert("a".into(), 2.into());
        assert_eq!(k.keys_of(&n), ["a", "b"]);
    }
}
