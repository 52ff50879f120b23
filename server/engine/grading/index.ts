export {
  parseNumber,
  tryParseNumber,
  NumberFormatError,
  NUMBER_FORMAT_HINT,
  type ParsedNumber,
  type NumberProblem,
  type ParseOutcome,
} from './parse-number';
export {
  gradeSubmission,
  parseAnswers,
  matchAnswer,
  formatForMessage,
  AnswerFormatError,
  DEFAULT_TOLERANCE_PCT,
  DEFAULT_CARRIED_FORWARD_CREDIT,
  MIN_SIG_FIGS_FOR_ROUNDING_RULE,
  type GradeResult,
  type GradeOptions,
  type FieldGrade,
  type Verdict,
} from './grade';
