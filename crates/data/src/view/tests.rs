use super::*;

/// [`super::eval`] on a table row, as an owned value.
fn eval(t: &Table, row: usize, e: &Expr) -> Value {
    super::eval(&row_of(t, row), e).to_value()
}

/// [`super::truth`] on a table row.
fn truth(t: &Table, row: usize, e: &Expr) -> bool {
    super::truth(&row_of(t, row), e)
}

fn num(x: f64) -> Value {
    Value::Number(x)
}
fn text(s: &str) -> Value {
    Value::Text(s.to_owned())
}
fn col(name: &str, ty: ColType, values: Vec<Value>) -> Column {
    Column {
        name: name.to_owned(),
        ty,
        values: values.into(),
    }
}
fn c(i: usize) -> Box<Expr> {
    Box::new(Expr::Col(i))
}
fn lit(v: Value) -> Box<Expr> {
    Box::new(Expr::Lit(v))
}
fn values(t: &Table, i: usize) -> Vec<Value> {
    t.columns[i].values.to_vec()
}

/// region, month, riders (with a missing rider count), fare
fn sample() -> Table {
    use Value::Missing as M;
    Table {
        columns: vec![
            col(
                "region",
                ColType::Text,
                vec![
                    text("N"),
                    text("S"),
                    text("N"),
                    text("E"),
                    text("S"),
                    text("W"),
                ],
            ),
            col(
                "month",
                ColType::Month,
                (0..6).map(|i| Value::Month(24_288 + i % 2)).collect(),
            ),
            col(
                "riders",
                ColType::Number,
                vec![num(10.0), num(5.0), M, num(1.0), num(7.0), num(2.0)],
            ),
            col(
                "fare",
                ColType::Number,
                vec![num(1.0), M, num(3.0), num(4.0), num(5.0), num(6.0)],
            ),
        ],
    }
}

#[test]
fn arithmetic_missing_and_division_by_zero() {
    let t = sample();
    let e = Expr::arith(ArithOp::Div, *c(2), *c(3));
    assert_eq!(eval(&t, 0, &e), num(10.0));
    assert_eq!(eval(&t, 1, &e), Value::Missing); // fare missing
    assert_eq!(eval(&t, 2, &e), Value::Missing); // riders missing
    let zero = Expr::arith(ArithOp::Div, *c(2), *lit(num(0.0)));
    assert_eq!(eval(&t, 0, &zero), Value::Missing);
    let neg = Expr::Neg(Box::new(Expr::arith(ArithOp::Sub, *c(2), *c(3))));
    assert_eq!(eval(&t, 3, &neg), num(3.0));
    let mul = Expr::arith(ArithOp::Mul, *c(2), *lit(num(2.0)));
    assert_eq!(eval(&t, 4, &mul), num(14.0));
    let add = Expr::arith(ArithOp::Add, *lit(Value::Year(2000)), *lit(num(4.0)));
    assert_eq!(eval(&t, 0, &add), num(2004.0));
    let overflow = Expr::arith(ArithOp::Mul, *lit(num(1e308)), *lit(num(10.0)));
    assert_eq!(eval(&t, 0, &overflow), Value::Missing);
}

/// A chain of operators is one node evaluated left to right in a loop:
/// 200,000 terms on a test thread's 2 MB stack (a tree one level per
/// operator overflowed it). The sums are exact: whole numbers far below
/// 2^53.
#[test]
fn long_chains_evaluate_in_a_loop() {
    let t = sample();
    let n = 200_000;
    let ones = (1..n).map(|_| (ArithOp::Add, *lit(num(1.0)))).collect();
    let sum = Expr::Arith(lit(num(1.0)), ones);
    assert_eq!(eval(&t, 0, &sum), num(n as f64));
    // left to right: ((riders - 1) * 2) / 4, riders = 10 in row 0
    let mixed = Expr::Arith(
        c(2),
        vec![
            (ArithOp::Sub, *lit(num(1.0))),
            (ArithOp::Mul, *lit(num(2.0))),
            (ArithOp::Div, *lit(num(4.0))),
        ],
    );
    assert_eq!(eval(&t, 0, &mixed), num(4.5));
    // a missing operand or a division by zero anywhere: missing
    let mut late = vec![(ArithOp::Add, *lit(num(1.0))); 1000];
    late.push((ArithOp::Div, *lit(num(0.0))));
    assert_eq!(eval(&t, 0, &Expr::Arith(c(2), late)), Value::Missing);
    let gt = |v: f64| Expr::Cmp(CmpOp::Gt, c(2), lit(num(v)));
    let all = Expr::And(vec![gt(0.0); n]);
    assert!(truth(&t, 0, &all));
    let mut some = vec![gt(1e9); n];
    some.push(gt(0.0));
    assert!(truth(&t, 0, &Expr::Or(some)));
    assert!(!truth(&t, 0, &Expr::Or(vec![gt(1e9); n])));
}

#[test]
fn comparisons_and_logic() {
    let t = sample();
    let gt = |v: f64| Expr::Cmp(CmpOp::Gt, c(2), lit(num(v)));
    assert!(truth(&t, 0, &gt(5.0)));
    assert!(!truth(&t, 1, &gt(5.0)));
    // Missing operand: every comparison is false, even !=.
    for op in [
        CmpOp::Eq,
        CmpOp::Ne,
        CmpOp::Lt,
        CmpOp::Le,
        CmpOp::Gt,
        CmpOp::Ge,
    ] {
        assert!(!truth(&t, 2, &Expr::Cmp(op, c(2), lit(num(1.0)))), "{op:?}");
    }
    // Not of a missing comparison is true (missing counts as false).
    assert!(truth(&t, 2, &Expr::Not(Box::new(gt(5.0)))));
    // Texts: byte order, exact equality.
    assert!(truth(&t, 0, &Expr::Cmp(CmpOp::Lt, c(0), lit(text("S")))));
    assert!(truth(
        &t,
        0,
        &Expr::Cmp(CmpOp::Lt, lit(text("Z")), lit(text("a")))
    ));
    assert!(!truth(&t, 0, &Expr::Cmp(CmpOp::Eq, c(0), lit(text("n")))));
    assert!(truth(&t, 0, &Expr::Cmp(CmpOp::Ne, c(0), lit(text("n")))));
    // Time kinds compare chronologically.
    assert!(truth(
        &t,
        1,
        &Expr::Cmp(CmpOp::Ge, c(1), lit(Value::Month(24_289)))
    ));
    assert!(!truth(
        &t,
        0,
        &Expr::Cmp(CmpOp::Ge, c(1), lit(Value::Month(24_289)))
    ));
    // Unrelated kinds are never equal.
    assert!(!truth(&t, 0, &Expr::Cmp(CmpOp::Eq, c(0), lit(num(1.0)))));
    assert!(truth(&t, 0, &Expr::Cmp(CmpOp::Ne, c(0), lit(num(1.0)))));
    assert!(!truth(&t, 0, &Expr::Cmp(CmpOp::Lt, c(0), lit(num(1.0)))));
    // And / Or with missing-as-false.
    let and = Expr::And(vec![gt(0.0), gt(5.0)]);
    assert!(truth(&t, 0, &and));
    assert!(!truth(&t, 2, &and));
    let or = Expr::Or(vec![gt(50.0), Expr::Not(Box::new(gt(0.0)))]);
    assert!(truth(&t, 2, &or));
    assert!(!truth(&t, 0, &or));
    // In.
    let inn = Expr::In(c(0), vec![text("N"), text("E")]);
    let hits: Vec<bool> = (0..6).map(|r| truth(&t, r, &inn)).collect();
    assert_eq!(hits, [true, false, true, true, false, false]);
    assert!(!truth(&t, 2, &Expr::In(c(2), vec![Value::Missing])));
    // A value used as a predicate is false, a predicate as a value missing.
    assert!(!truth(&t, 0, &Expr::Col(2)));
    assert_eq!(eval(&t, 0, &gt(1.0)), Value::Missing);
}

#[test]
fn keep_filters_in_order() {
    let out = run_view(
        &sample(),
        &[Step::Keep(Expr::Cmp(CmpOp::Ge, c(2), lit(num(5.0))))],
    );
    assert_eq!(values(&out, 0), vec![text("N"), text("S"), text("S")]);
    assert_eq!(out.columns.len(), 4);
    assert_eq!(out.columns[1].ty, ColType::Month);
    let none = run_view(
        &out,
        &[Step::Keep(Expr::Cmp(CmpOp::Gt, c(2), lit(num(99.0))))],
    );
    assert_eq!(row_count(&none), 0);
    assert_eq!(none.columns.len(), 4);
}

#[test]
fn derive_appends_a_number_column() {
    let out = run_view(
        &sample(),
        &[Step::Derive {
            name: "per".into(),
            expr: Expr::arith(ArithOp::Mul, *c(2), *c(3)),
        }],
    );
    let last = &out.columns[4];
    assert_eq!((last.name.as_str(), last.ty), ("per", ColType::Number));
    assert_eq!(
        last.values,
        vec![
            num(10.0),
            Value::Missing,
            Value::Missing,
            num(4.0),
            num(35.0),
            num(12.0)
        ]
    );
}

fn agg(name: &str, func: AggFn, column: Option<usize>) -> Aggregate {
    Aggregate {
        name: name.into(),
        func,
        column,
    }
}

#[test]
fn group_aggregates_skip_missing_per_column() {
    let steps = [Step::Group {
        keys: vec![0],
        aggregates: vec![
            agg("rows", AggFn::Count, None),
            agg("n", AggFn::Count, Some(2)),
            agg("sum", AggFn::Sum, Some(2)),
            agg("mean", AggFn::Mean, Some(2)),
            agg("fare_mean", AggFn::Mean, Some(3)),
            agg("median", AggFn::Median, Some(3)),
            agg("min", AggFn::Min, Some(2)),
            agg("max", AggFn::Max, Some(3)),
            agg("first", AggFn::First, Some(2)),
            agg("last", AggFn::Last, Some(2)),
            agg("first_month", AggFn::First, Some(1)),
        ],
    }];
    let out = run_view(&sample(), &steps);
    use Value::Missing as M;
    assert_eq!(
        values(&out, 0),
        vec![text("N"), text("S"), text("E"), text("W")]
    );
    assert_eq!(
        values(&out, 1),
        vec![num(2.0), num(2.0), num(1.0), num(1.0)]
    );
    assert_eq!(
        values(&out, 2),
        vec![num(1.0), num(2.0), num(1.0), num(1.0)]
    );
    assert_eq!(
        values(&out, 3),
        vec![num(10.0), num(12.0), num(1.0), num(2.0)]
    );
    assert_eq!(
        values(&out, 4),
        vec![num(10.0), num(6.0), num(1.0), num(2.0)]
    );
    // N: fares 1 and 3 (both rows count for fare, although riders is missing in one).
    assert_eq!(
        values(&out, 5),
        vec![num(2.0), num(5.0), num(4.0), num(6.0)]
    );
    assert_eq!(
        values(&out, 6),
        vec![num(2.0), num(5.0), num(4.0), num(6.0)]
    );
    assert_eq!(
        values(&out, 7),
        vec![num(10.0), num(5.0), num(1.0), num(2.0)]
    );
    assert_eq!(
        values(&out, 8),
        vec![num(3.0), num(5.0), num(4.0), num(6.0)]
    );
    assert_eq!(
        values(&out, 9),
        vec![num(10.0), num(5.0), num(1.0), num(2.0)]
    );
    assert_eq!(
        values(&out, 10),
        vec![num(10.0), num(7.0), num(1.0), num(2.0)]
    );
    assert_eq!(values(&out, 11)[0], Value::Month(24_288));
    assert_eq!(out.columns[11].ty, ColType::Month);
    assert_eq!(out.columns[0].ty, ColType::Text);
    assert_eq!(out.columns[7].ty, ColType::Number);
    // A group with only missing cells gives missing, but count 0.
    let only_missing = Table {
        columns: vec![
            col("k", ColType::Text, vec![text("a"), text("a")]),
            col("x", ColType::Number, vec![M, M]),
        ],
    };
    let out = run_view(
        &only_missing,
        &[Step::Group {
            keys: vec![0],
            aggregates: vec![
                agg("s", AggFn::Sum, Some(1)),
                agg("m", AggFn::Median, Some(1)),
                agg("lo", AggFn::Min, Some(1)),
                agg("f", AggFn::First, Some(1)),
                agg("n", AggFn::Count, Some(1)),
            ],
        }],
    );
    assert_eq!(
        out.columns
            .iter()
            .map(|c| c.values.value(0))
            .collect::<Vec<_>>(),
        vec![text("a"), M, M, M, M, num(0.0)]
    );
}

#[test]
fn group_median_even_and_odd_and_text_extremes() {
    let t = Table {
        columns: vec![
            col(
                "k",
                ColType::Text,
                vec![text("a"); 4]
                    .into_iter()
                    .chain(vec![text("b"); 3])
                    .collect(),
            ),
            col(
                "x",
                ColType::Number,
                [4.0, 1.0, 3.0, 2.0, 9.0, -1.0, 5.0].map(num).to_vec(),
            ),
            col(
                "name",
                ColType::Text,
                ["b", "B", "ab", "a", "z", "Z", "é"].map(text).to_vec(),
            ),
        ],
    };
    let out = run_view(
        &t,
        &[Step::Group {
            keys: vec![0],
            aggregates: vec![
                agg("med", AggFn::Median, Some(1)),
                agg("lo", AggFn::Min, Some(2)),
                agg("hi", AggFn::Max, Some(2)),
            ],
        }],
    );
    assert_eq!(values(&out, 1), vec![num(2.5), num(5.0)]);
    // Byte order: uppercase before lowercase, non-ASCII after ASCII.
    assert_eq!(values(&out, 2), vec![text("B"), text("Z")]);
    assert_eq!(values(&out, 3), vec![text("b"), text("é")]);
    assert_eq!(out.columns[2].ty, ColType::Text);
}

#[test]
fn group_keys_in_first_appearance_with_missing_key() {
    let t = Table {
        columns: vec![
            col(
                "a",
                ColType::Text,
                vec![
                    text("x"),
                    Value::Missing,
                    text("x"),
                    text("y"),
                    Value::Missing,
                ],
            ),
            col(
                "b",
                ColType::Year,
                [2020, 2020, 2021, 2020, 2020].map(Value::Year).to_vec(),
            ),
            col(
                "v",
                ColType::Number,
                [1.0, 2.0, 3.0, 4.0, 5.0].map(num).to_vec(),
            ),
        ],
    };
    let out = run_view(
        &t,
        &[Step::Group {
            keys: vec![0, 1],
            aggregates: vec![agg("s", AggFn::Sum, Some(2))],
        }],
    );
    assert_eq!(
        values(&out, 0),
        vec![text("x"), Value::Missing, text("x"), text("y")]
    );
    assert_eq!(
        values(&out, 1),
        [2020, 2020, 2021, 2020].map(Value::Year).to_vec()
    );
    assert_eq!(values(&out, 2), [1.0, 7.0, 3.0, 4.0].map(num).to_vec());
    assert_eq!(out.columns[1].ty, ColType::Year);
    assert_eq!(out.columns[1].name, "b");
}

#[test]
fn group_on_empty_input_and_without_keys() {
    let empty = Table {
        columns: vec![
            col("k", ColType::Text, vec![]),
            col("x", ColType::Number, vec![]),
        ],
    };
    let by_key = run_view(
        &empty,
        &[Step::Group {
            keys: vec![0],
            aggregates: vec![agg("n", AggFn::Count, None)],
        }],
    );
    assert_eq!(by_key.columns.len(), 2);
    assert_eq!(row_count(&by_key), 0);
    let total = run_view(
        &empty,
        &[Step::Group {
            keys: vec![],
            aggregates: vec![agg("n", AggFn::Count, None), agg("s", AggFn::Sum, Some(1))],
        }],
    );
    assert_eq!(values(&total, 0), vec![num(0.0)]);
    assert_eq!(values(&total, 1), vec![Value::Missing]);
    let all = run_view(
        &sample(),
        &[Step::Group {
            keys: vec![],
            aggregates: vec![agg("s", AggFn::Sum, Some(2))],
        }],
    );
    assert_eq!(values(&all, 0), vec![num(25.0)]);
}

#[test]
fn compensated_sum_is_order_stable() {
    // Naive left-to-right summation gives 0 for [1e16, 1, -1e16] and 2 for
    // [1, 1e16, 1, -1e16]-style inputs; Neumaier recovers the exact 1 and 2.
    let mut s = Sum::default();
    for x in [1e16, 1.0, -1e16] {
        s.add(x);
    }
    assert_eq!(s.total(), Some(1.0));
    let mut a = Sum::default();
    let mut b = Sum::default();
    let xs = [0.1, 0.2, 0.3, 1e10, -1e10, 0.4];
    for x in xs {
        a.add(x);
    }
    for x in xs.iter().rev() {
        b.add(*x);
    }
    assert_eq!(a.total(), b.total());
    assert_eq!(Sum::default().total(), None);
}

#[test]
fn sums_too_large_are_infinite_and_means_are_not() {
    // two cells of 1.7e308: the sum (3.4e308) is beyond the largest
    // double (about 1.798e308, IEEE 754 binary64), their mean is not
    let t = Table {
        columns: vec![
            col(
                "k",
                ColType::Text,
                ["a", "a", "b", "c", "c", "c"].map(text).to_vec(),
            ),
            col(
                "x",
                ColType::Number,
                [1.7e308, 1.7e308, 1.0, 1.7e308, 1.7e308, -1.7e308]
                    .map(num)
                    .to_vec(),
            ),
        ],
    };
    let out = run_view(
        &t,
        &[Step::Group {
            keys: vec![0],
            aggregates: vec![
                agg("s", AggFn::Sum, Some(1)),
                agg("m", AggFn::Mean, Some(1)),
            ],
        }],
    );
    assert_eq!(
        values(&out, 1),
        vec![num(f64::INFINITY), num(1.0), num(1.7e308)]
    );
    // (1.7e308 + 1.7e308 - 1.7e308) / 3, rounded once more
    assert_eq!(values(&out, 2)[..2], [num(1.7e308), num(1.0)]);
    assert!((values(&out, 2)[2] == num(1.7e308 / 3.0)));
    assert_eq!(
        overflow(&out),
        Some(Overflow {
            column: 1,
            row: 0,
            sign: 1.0
        })
    );
    assert_eq!(overflow(&t), None);
    // a sum merged from parts, scaled or not, is the one-pass sum
    let xs = [1e300, 1.7e308, -3.0, 1.7e308, -1.7e308, 2.5, -1e300];
    let mut one = Sum::default();
    xs.iter().for_each(|&x| one.add(x));
    for cut in 0..=xs.len() {
        let (mut a, mut b) = (Sum::default(), Sum::default());
        xs[..cut].iter().for_each(|&x| a.add(x));
        xs[cut..].iter().for_each(|&x| b.add(x));
        a.merge(&b);
        assert_eq!(a.total(), one.total(), "{cut}");
    }
    assert_eq!(one.total(), Some(1.7e308 - 0.5));
    // small sums are untouched by the scaling
    let mut small = Sum::default();
    [0.1, 0.2, 0.3].iter().for_each(|&x| small.add(x));
    assert_eq!(small.total(), Some(0.6));
}

#[test]
fn a_sum_is_thirty_two_bytes() {
    // the fixed-point part, the partials' box, the count: a million
    // groups' sums in 32 MB
    assert_eq!(std::mem::size_of::<Sum>(), 32);
}

#[test]
fn sort_is_stable_with_missing_last_both_ways() {
    let t = sample();
    let asc = run_view(
        &t,
        &[Step::Sort {
            keys: vec![(2, false)],
        }],
    );
    assert_eq!(
        values(&asc, 2),
        vec![
            num(1.0),
            num(2.0),
            num(5.0),
            num(7.0),
            num(10.0),
            Value::Missing
        ]
    );
    let desc = run_view(
        &t,
        &[Step::Sort {
            keys: vec![(2, true)],
        }],
    );
    assert_eq!(
        values(&desc, 2),
        vec![
            num(10.0),
            num(7.0),
            num(5.0),
            num(2.0),
            num(1.0),
            Value::Missing
        ]
    );
    // Two keys: region ascending (byte order), then riders descending;
    // rows keep their other cells.
    let two = run_view(
        &t,
        &[Step::Sort {
            keys: vec![(0, false), (2, true)],
        }],
    );
    assert_eq!(
        values(&two, 0),
        ["E", "N", "N", "S", "S", "W"].map(text).to_vec()
    );
    assert_eq!(
        values(&two, 2),
        vec![
            num(1.0),
            num(10.0),
            Value::Missing,
            num(7.0),
            num(5.0),
            num(2.0)
        ]
    );
    assert_eq!(values(&two, 3)[4], Value::Missing); // S,5 has missing fare
                                                    // Stability: ties keep input order.
    let by_month = run_view(
        &t,
        &[Step::Sort {
            keys: vec![(1, true)],
        }],
    );
    assert_eq!(
        values(&by_month, 0),
        ["S", "E", "W", "N", "N", "S"].map(text).to_vec()
    );
    let empty = run_view(
        &Table::default(),
        &[Step::Sort {
            keys: vec![(0, false)],
        }],
    );
    assert_eq!(empty, Table::default());
}

#[test]
fn top_keeps_largest_and_folds_rest() {
    // Totals of riders: N 10, S 12, E 1, W 2.
    let out = run_view(
        &sample(),
        &[Step::Top {
            key: 0,
            by: 2,
            n: 2,
            rest: "Other".into(),
        }],
    );
    // Kept rows (N, S) in original order, then the folded rest: E and W
    // share a month, so they fold into one row.
    assert_eq!(
        values(&out, 0),
        ["N", "S", "N", "S", "Other"].map(text).to_vec()
    );
    assert_eq!(
        values(&out, 1),
        [24_288, 24_289, 24_288, 24_288, 24_289]
            .map(Value::Month)
            .to_vec()
    );
    assert_eq!(values(&out, 2)[4], num(3.0));
    assert_eq!(values(&out, 3)[4], num(10.0));
    assert_eq!(values(&out, 2)[1], num(5.0));
    assert_eq!(values(&out, 2)[2], Value::Missing);

    // With W in the other month, the rest folds into one row per month,
    // in order of first appearance of the combination.
    let mut t = sample();
    let mut months = t.columns[1].values.to_vec();
    months[5] = Value::Month(24_288);
    t.columns[1].values = months.into();
    let out = run_view(
        &t,
        &[Step::Top {
            key: 0,
            by: 2,
            n: 2,
            rest: "Other".into(),
        }],
    );
    assert_eq!(values(&out, 0)[4..], [text("Other"), text("Other")]);
    assert_eq!(
        values(&out, 1)[4..],
        [Value::Month(24_289), Value::Month(24_288)]
    );
    assert_eq!(values(&out, 2)[4..], [num(1.0), num(2.0)]);
    assert_eq!(values(&out, 3)[4..], [num(4.0), num(6.0)]);
}

#[test]
fn top_ties_by_first_appearance_and_folds_all_missing() {
    use Value::Missing as M;
    let t = Table {
        columns: vec![
            col(
                "k",
                ColType::Text,
                ["a", "b", "c", "d", "c"].map(text).to_vec(),
            ),
            col(
                "v",
                ColType::Number,
                vec![num(5.0), num(5.0), num(2.0), M, num(3.0)],
            ),
            col("w", ColType::Number, vec![M, M, M, M, M]),
        ],
    };
    // a and b tie at 5 with c; a comes first, so a is kept with n = 1.
    let out = run_view(
        &t,
        &[Step::Top {
            key: 0,
            by: 1,
            n: 1,
            rest: "rest".into(),
        }],
    );
    assert_eq!(values(&out, 0), vec![text("a"), text("rest")]);
    assert_eq!(values(&out, 1), vec![num(5.0), num(10.0)]);
    assert_eq!(values(&out, 2), vec![M, M]);
    // n = 3: c (5) ties a and b, d (all missing) ranks last.
    let out = run_view(
        &t,
        &[Step::Top {
            key: 0,
            by: 1,
            n: 3,
            rest: "rest".into(),
        }],
    );
    assert_eq!(
        values(&out, 0),
        ["a", "b", "c", "c", "rest"].map(text).to_vec()
    );
    assert_eq!(values(&out, 1)[4], M);
    // <= n categories: unchanged, including an empty table.
    let same = run_view(
        &t,
        &[Step::Top {
            key: 0,
            by: 1,
            n: 4,
            rest: "rest".into(),
        }],
    );
    assert_eq!(same, t);
    let empty = Table {
        columns: vec![
            col("k", ColType::Text, vec![]),
            col("v", ColType::Number, vec![]),
        ],
    };
    assert_eq!(
        run_view(
            &empty,
            &[Step::Top {
                key: 0,
                by: 1,
                n: 0,
                rest: "r".into()
            }]
        ),
        empty
    );
}

#[test]
fn top_existing_rest_category_is_folded_in() {
    let t = Table {
        columns: vec![
            col(
                "k",
                ColType::Text,
                ["Other", "a", "b", "c"].map(text).to_vec(),
            ),
            col(
                "v",
                ColType::Number,
                [100.0, 3.0, 2.0, 1.0].map(num).to_vec(),
            ),
        ],
    };
    let out = run_view(
        &t,
        &[Step::Top {
            key: 0,
            by: 1,
            n: 2,
            rest: "Other".into(),
        }],
    );
    assert_eq!(values(&out, 0), ["a", "b", "Other"].map(text).to_vec());
    assert_eq!(values(&out, 1), [3.0, 2.0, 101.0].map(num).to_vec());
}

#[test]
fn steps_chain_in_order() {
    let out = run_view(
        &sample(),
        &[
            Step::Keep(Expr::Not(Box::new(Expr::In(c(0), vec![text("W")])))),
            Step::Group {
                keys: vec![0],
                aggregates: vec![agg("riders", AggFn::Sum, Some(2))],
            },
            Step::Derive {
                name: "double".into(),
                expr: Expr::arith(ArithOp::Mul, *c(1), *lit(num(2.0))),
            },
            Step::Sort {
                keys: vec![(2, true)],
            },
        ],
    );
    assert_eq!(values(&out, 0), ["S", "N", "E"].map(text).to_vec());
    assert_eq!(values(&out, 2), [24.0, 20.0, 2.0].map(num).to_vec());
    assert_eq!(run_view(&sample(), &[]), sample());
}
