-- The questions list counts every question's answers and a thread reads its own: by question id.
CREATE INDEX "answers_question" ON "answers" USING btree ("question_id");
