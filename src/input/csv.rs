//! A small CSV reader (RFC 4180: commas, double quotes, `""` inside quotes, LF or
//! CRLF line ends) that keeps the line and column of every cell, for flows exported
//! from a spreadsheet model next to the deal file.

use crate::diag::Position;

/// One cell with where it starts.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Cell {
    /// The cell's text, unquoted.
    pub text: String,
    /// Where the cell starts.
    pub position: Position,
}

/// Why a CSV text could not be split into cells.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CsvError {
    /// What is wrong.
    pub message: String,
    /// Where.
    pub position: Position,
}

/// Splits CSV text into rows of cells. Blank lines are skipped; a leading byte-order
/// mark is ignored; a control character (such as NUL) is an error.
pub fn read(text: &str) -> Result<Vec<Vec<Cell>>, CsvError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    if let Some(d) = super::first_control(text) {
        return Err(CsvError {
            message: d.message,
            position: d.position.unwrap_or(Position { line: 1, column: 1 }),
        });
    }
    let mut rows = Vec::new();
    let mut row: Vec<Cell> = Vec::new();
    let mut chars = text.chars().peekable();
    let (mut line, mut column) = (1usize, 1usize);
    loop {
        // At the start of a cell.
        let start = Position { line, column };
        let mut cell = String::new();
        if chars.peek() == Some(&'"') {
            chars.next();
            column += 1;
            loop {
                match chars.next() {
                    None => {
                        return Err(CsvError {
                            message: "a quoted cell is never closed".to_string(),
                            position: start,
                        })
                    }
                    Some('"') => {
                        column += 1;
                        if chars.peek() == Some(&'"') {
                            chars.next();
                            column += 1;
                            cell.push('"');
                        } else {
                            break;
                        }
                    }
                    Some('\n') => {
                        line += 1;
                        column = 1;
                        cell.push('\n');
                    }
                    Some(c) => {
                        column += 1;
                        cell.push(c);
                    }
                }
            }
            // Only a separator or a line end may follow a closing quote.
            match chars.peek() {
                None | Some(',') | Some('\n') | Some('\r') => {}
                Some(_) => {
                    return Err(CsvError {
                        message: "text follows a closing quote in a cell".to_string(),
                        position: Position { line, column },
                    })
                }
            }
        } else {
            while let Some(&c) = chars.peek() {
                if c == ',' || c == '\n' || c == '\r' {
                    break;
                }
                cell.push(c);
                column += 1;
                chars.next();
            }
        }
        row.push(Cell {
            text: cell,
            position: start,
        });
        match chars.next() {
            Some(',') => column += 1,
            Some('\r') => {
                if chars.peek() == Some(&'\n') {
                    chars.next();
                }
                end_row(&mut rows, &mut row);
                line += 1;
                column = 1;
            }
            Some('\n') => {
                end_row(&mut rows, &mut row);
                line += 1;
                column = 1;
            }
            None => {
                end_row(&mut rows, &mut row);
                return Ok(rows);
            }
            Some(_) => {}
        }
    }
}

fn end_row(rows: &mut Vec<Vec<Cell>>, row: &mut Vec<Cell>) {
    let blank = row.len() == 1 && row[0].text.trim().is_empty();
    let cells = std::mem::take(row);
    if !blank {
        rows.push(cells);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cells_with_quotes_and_positions() {
        let rows =
            read("date,amount,note\r\n2027-01-15,-100,\"Land, permits\"\n\n2027-02-01,\"5\"\"\",x")
                .unwrap();
        assert_eq!(rows.len(), 3);
        assert_eq!(rows[1][2].text, "Land, permits");
        assert_eq!(
            rows[1][2].position,
            Position {
                line: 2,
                column: 17
            }
        );
        assert_eq!(rows[2][1].text, "5\"");
        assert_eq!(rows[2][0].position, Position { line: 4, column: 1 });
    }

    #[test]
    fn unclosed_quote_is_an_error() {
        assert!(read("a,\"b\n").is_err());
        assert!(read("a,\"b\"c\n").is_err());
    }
}
